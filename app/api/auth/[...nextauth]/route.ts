// /api/auth/* — next-auth's sign-in, sign-out, CSRF and session endpoints. POSTs are refused from other sites
// (403), and the credentials sign-in is rate-limited per client address (429) before next-auth sees it.
import NextAuth from 'next-auth';
import { NextResponse, type NextRequest } from 'next/server';
import { authOptions } from '@/lib/auth/options';
import { checkSignInRate } from '@/lib/auth/signin';
import { withPublic } from '@/lib/http/handler';
import { clientAddress } from '@/lib/http/client-address';
import { config } from '@/lib/config';

type P = { nextauth: string[] };
type Ctx = { params: Promise<P> };
// Options are built per request so secrets are read from the environment at run time, not at build time.
const nextAuth = (req: NextRequest, ctx: Ctx) => NextAuth(req as never, ctx as never, authOptions());

export const GET = nextAuth;

export const POST = withPublic<P>(async ({ req, params, requestId }) => {
  if ((params.nextauth ?? []).join('/') === 'callback/credentials') {
    const email = (await req.clone().formData().catch(() => null))?.get('email');
    const r = await checkSignInRate({ ip: clientAddress(req.headers), email: typeof email === 'string' ? email : null, userAgent: req.headers.get('user-agent'), requestId });
    if (!r.ok) {
      // `url` carries the error the way next-auth's client expects it (signIn() reads `error` from it).
      return NextResponse.json(
        { url: `${config.baseUrl()}/signin?error=rate_limited`, error: { code: 'rate_limited', message: r.message, retryAfterSeconds: r.retryAfterSeconds, requestId } },
        { status: 429, headers: { 'retry-after': String(r.retryAfterSeconds), 'cache-control': 'no-store', 'x-request-id': requestId } },
      );
    }
  }
  return nextAuth(req, { params: Promise.resolve(params) });
});
