import 'server-only';
import type { NextAuthOptions } from 'next-auth';
import CredentialsProvider from 'next-auth/providers/credentials';
import { attemptSignIn } from './signin';
import { IDLE_SECONDS, sessionCookieName, sessionCookieOptions } from './session';
import { logAccess } from '@/lib/access-log';
import { config } from '@/lib/config';
import { clientAddress } from '@/lib/http/client-address';

const header = (h: unknown, name: string): string | null => {
  const v = (h as Record<string, string | string[] | undefined> | undefined)?.[name];
  return Array.isArray(v) ? v[0] ?? null : v ?? null;
};

/** next-auth configuration: e-mail + password, JWT sessions that carry only the user id. */
export function authOptions(): NextAuthOptions {
  return {
    secret: config.authSecret(),
    session: { strategy: 'jwt', maxAge: IDLE_SECONDS, updateAge: 0 },
    jwt: { maxAge: IDLE_SECONDS },
    pages: { signIn: '/signin', error: '/signin' },
    cookies: { sessionToken: { name: sessionCookieName(), options: { ...sessionCookieOptions(), maxAge: undefined } } },
    providers: [
      CredentialsProvider({
        name: 'E-mail and password',
        credentials: { email: { label: 'E-mail', type: 'email' }, password: { label: 'Password', type: 'password' } },
        async authorize(credentials, req) {
          const email = String(credentials?.email ?? '');
          const password = String(credentials?.password ?? '');
          if (!email || !password || email.length > 254 || password.length > 200) return null;
          const ip = clientAddress(req?.headers as Record<string, string | string[] | undefined> | undefined);
          const r = await attemptSignIn({ email, password, ip, userAgent: header(req?.headers, 'user-agent') });
          if (r.ok) return { id: String(r.userId) };
          // next-auth passes a thrown message to the sign-in page as `error`.
          if (r.reason === 'locked') throw new Error('locked');
          return null;
        },
      }),
    ],
    callbacks: {
      // Only the user id travels in the token; roles are read from memberships on every request.
      async jwt({ token, user }) {
        return { sub: user ? String(user.id) : token.sub };
      },
      async session({ session, token }) {
        return { expires: session.expires, user: { id: token.sub } } as typeof session;
      },
    },
    events: {
      async signOut({ token }) {
        const id = Number(token?.sub);
        await logAccess({ event: 'signout', userId: Number.isInteger(id) ? id : null });
      },
    },
  };
}
