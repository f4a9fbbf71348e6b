'use client';
import { useState } from 'react';
import { signIn } from 'next-auth/react';
import { useRouter } from 'next/navigation';

const MESSAGES: Record<string, string> = {
  locked: 'Too many failed attempts: this account is locked for 15 minutes. Try again later or ask your administrator.',
  rate_limited: 'Too many failed sign-ins from your network address. Wait up to 15 minutes and try again, or ask your administrator.',
  CredentialsSignin: 'The e-mail address or password is not right.',
};

/** E-mail and password form posting to next-auth's credentials provider. */
export function SignInForm() {
  const router = useRouter();
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const form = new FormData(e.currentTarget);
    setBusy(true);
    setError(null);
    const r = await signIn('credentials', { email: String(form.get('email')), password: String(form.get('password')), redirect: false });
    setBusy(false);
    if (r?.ok && !r.error) {
      router.replace('/');
      router.refresh();
    } else {
      setError(MESSAGES[r?.error ?? ''] ?? MESSAGES.CredentialsSignin);
    }
  }

  return (
    <form onSubmit={onSubmit} className="panel flex flex-col gap-3" noValidate>
      {error && (
        <p role="alert" className="notice-error">
          {error}
        </p>
      )}
      <div className="flex flex-col gap-1">
        <label htmlFor="email">E-mail</label>
        <input id="email" name="email" type="email" autoComplete="username" required />
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="password">Password</label>
        <input id="password" name="password" type="password" autoComplete="current-password" required />
      </div>
      <div>
        <button type="submit" className="btn" disabled={busy}>
          {busy ? 'Signing in…' : 'Sign in'}
        </button>
      </div>
      <p className="text-xs text-ink-faint">After 5 failed attempts the account is locked for 15 minutes. Sessions end after 30 minutes without activity.</p>
    </form>
  );
}
