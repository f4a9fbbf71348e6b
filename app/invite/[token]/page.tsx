import type { Metadata } from 'next';
import Link from 'next/link';
import { describeInvitation } from '@/lib/users/invitations';
import { SetPasswordForm } from '@/components/set-password-form';

export const metadata: Metadata = { title: 'Set your password' };

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const inv = await describeInvitation(token);
  return (
    <div className="mx-auto max-w-md">
      <h1 className="mb-3">Set your password</h1>
      {inv.state === 'valid' ? (
        <>
          <p className="mb-3 text-sm">
            Welcome, <strong>{inv.name}</strong>. Choose a password for <strong>{inv.email}</strong>.
          </p>
          <SetPasswordForm token={token} />
        </>
      ) : (
        <p role="alert" className="notice-error">
          {inv.state === 'used'
            ? 'This link has already been used. Sign in with your password, or ask your administrator for a new invitation.'
            : inv.state === 'expired'
              ? 'This link has expired. Ask your administrator for a new invitation.'
              : 'This link is not valid. Check that you copied all of it, or ask your administrator for a new invitation.'}{' '}
          <Link href="/signin">Go to sign-in</Link>
        </p>
      )}
    </div>
  );
}
