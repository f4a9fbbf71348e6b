import 'server-only';
import { encode, decode } from 'next-auth/jwt';
import { config } from '@/lib/config';

/** Idle timeout: a session not used for this long ends. Every authenticated API call slides it. */
export const IDLE_SECONDS = 30 * 60;

export function sessionCookieName(): string {
  return config.secureCookies() ? '__Secure-excursion.session' : 'excursion.session';
}

export function sessionCookieOptions() {
  return { httpOnly: true, sameSite: 'lax' as const, path: '/', secure: config.secureCookies(), maxAge: IDLE_SECONDS };
}

/** Reads the user id from a session token; null when missing, forged or expired. */
export async function readSessionToken(token: string | undefined): Promise<number | null> {
  if (!token) return null;
  try {
    const payload = await decode({ token, secret: config.authSecret() });
    const id = Number(payload?.sub);
    return Number.isInteger(id) && id > 0 ? id : null;
  } catch {
    return null;
  }
}

/** Issues a fresh token carrying only the user id, valid for the idle window. */
export function issueSessionToken(userId: number): Promise<string> {
  return encode({ token: { sub: String(userId) }, secret: config.authSecret(), maxAge: IDLE_SECONDS });
}
