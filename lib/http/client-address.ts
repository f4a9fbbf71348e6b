/**
 * The address of the client as the nearest proxy saw it: the last entry of X-Forwarded-For. The app listens on
 * 127.0.0.1 only, so every request comes either straight from a local process (Next fills the header with the
 * socket address) or through the TLS reverse proxy in front, which appends the address it accepted the
 * connection from. Entries further left are whatever the client sent and are never trusted.
 */
export function clientAddress(headers: Headers | Record<string, string | string[] | undefined> | undefined): string | null {
  if (!headers) return null;
  const raw = headers instanceof Headers ? headers.get('x-forwarded-for') : headers['x-forwarded-for'];
  const value = Array.isArray(raw) ? raw[raw.length - 1] : raw;
  if (!value) return null;
  const last = value.split(',').map((s) => s.trim()).filter(Boolean).pop();
  if (!last) return null;
  // IPv4 clients of a dual-stack socket show up as ::ffff:a.b.c.d.
  return last.replace(/^::ffff:(?=\d+\.\d+\.\d+\.\d+$)/i, '').slice(0, 64);
}
