import Link from 'next/link';
import { currentPrincipal } from '@/lib/auth/gates';
import { SignOutButton } from './sign-out-button';

/** The top bar: product name, the signed-in person and sign-out. */
export async function AppHeader() {
  const p = await currentPrincipal();
  return (
    <header className="border-b-2 border-glide bg-paper-raised">
      <div className="mx-auto flex max-w-page items-center justify-between gap-4 px-4 py-2">
        <Link href="/" className="flex items-baseline gap-2 text-ink no-underline">
          <span aria-hidden="true" className="inline-block h-3 w-6 translate-y-[-1px] rounded-full border-2 border-glide" />
          <span className="text-lg font-bold tracking-tight">Excursion</span>
        </Link>
        {p ? (
          <div className="flex items-center gap-3 text-sm">
            <span>
              Signed in as <strong>{p.name}</strong> <span className="text-ink-faint">({p.email})</span>
            </span>
            <SignOutButton />
          </div>
        ) : (
          <Link href="/signin" className="text-sm">
            Sign in
          </Link>
        )}
      </div>
    </header>
  );
}
