// Runs before routing, only for the routes with dynamic segments: an address whose percent-encoding is not valid
// UTF-8 (for example the overlong %C0%AE) cannot be decoded into route parameters; answer it 400 here instead of
// letting the router fail with a plain-text 500.
import { NextResponse, type NextRequest } from 'next/server';

export function proxy(req: NextRequest) {
  try {
    decodeURIComponent(req.nextUrl.pathname);
  } catch {
    return NextResponse.json(
      { error: { code: 'bad_request', message: 'The address contains percent-encoding that is not valid UTF-8.' } },
      { status: 400, headers: { 'cache-control': 'no-store' } },
    );
  }
  return NextResponse.next();
}

export const config = { matcher: ['/api/:path*', '/studies/:path*', '/invite/:path*'] };
