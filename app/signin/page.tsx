import type { Metadata } from 'next';
import { redirect } from 'next/navigation';
import { currentPrincipal } from '@/lib/auth/gates';
import { SignInForm } from '@/components/signin-form';

export const metadata: Metadata = { title: 'Sign in' };

export default async function SignInPage() {
  if (await currentPrincipal()) redirect('/');
  return (
    <div className="mx-auto max-w-md">
      <h1 className="mb-1">Sign in</h1>
      <p className="mb-4 text-sm text-ink-soft">Use the e-mail address your study administrator registered for you.</p>
      <SignInForm />
    </div>
  );
}
