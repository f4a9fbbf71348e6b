// /api/auth/* — next-auth's sign-in, sign-out, CSRF and session endpoints.
import NextAuth from 'next-auth';
import type { NextRequest } from 'next/server';
import { authOptions } from '@/lib/auth/options';

type Ctx = { params: Promise<{ nextauth: string[] }> };
// Options are built per request so secrets are read from the environment at run time, not at build time.
const handler = (req: NextRequest, ctx: Ctx) => NextAuth(req as never, ctx as never, authOptions());
export { handler as GET, handler as POST };
