'use client';
import { signOut } from 'next-auth/react';

/** Ends the session (the server records the sign-out in the access log). */
export function SignOutButton() {
  return (
    <button type="button" className="btn-quiet" onClick={() => signOut({ callbackUrl: '/signin' })}>
      Sign out
    </button>
  );
}
