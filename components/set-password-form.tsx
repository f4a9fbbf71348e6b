'use client';
import { useState } from 'react';
import Link from 'next/link';
import { postJson } from '@/components/fetcher';

/** Uses the one-time invitation link to set a password. */
export function SetPasswordForm({ token }: { token: string }) {
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState(false);
  const [busy, setBusy] = useState(false);

  async function onSubmit(e: React.FormEvent<HTMLFormElement>) {
    e.preventDefault();
    const f = new FormData(e.currentTarget);
    const password = String(f.get('password'));
    if (password !== String(f.get('confirm'))) {
      setError('The two passwords are not the same.');
      return;
    }
    setBusy(true);
    const r = await postJson('/api/invitations/accept', { token, password });
    setBusy(false);
    if (r.ok) setDone(true);
    else setError(r.error.fields?.password ? `${r.error.message}` : r.error.message);
  }

  if (done)
    return (
      <p role="status" className="notice-ok">
        Your password is set. <Link href="/signin">Sign in now</Link>.
      </p>
    );
  return (
    <form onSubmit={onSubmit} className="panel flex flex-col gap-3">
      {error && (
        <p role="alert" className="notice-error">
          {error}
        </p>
      )}
      <div className="flex flex-col gap-1">
        <label htmlFor="password">New password (at least 12 characters)</label>
        <input id="password" name="password" type="password" autoComplete="new-password" minLength={12} required />
      </div>
      <div className="flex flex-col gap-1">
        <label htmlFor="confirm">Repeat the password</label>
        <input id="confirm" name="confirm" type="password" autoComplete="new-password" minLength={12} required />
      </div>
      <div>
        <button className="btn" type="submit" disabled={busy}>
          Set password
        </button>
      </div>
    </form>
  );
}
