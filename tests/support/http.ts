// An HTTP client with a cookie jar, signing in through next-auth's real credentials endpoint.
export const BASE = process.env.TEST_BASE_URL ?? 'http://127.0.0.1:3100';
export const DEMO_PASSWORD = 'tempo-demo-pass-2026';

export type JsonResponse<T = any> = { status: number; body: T; headers: Headers };

export class Client {
  private jar = new Map<string, string>();

  cookieHeader(): string {
    return [...this.jar].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  cookie(name: string): string | undefined {
    return this.jar.get(name);
  }

  private store(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair, ...attrs] = c.split(';');
      const i = pair.indexOf('=');
      const name = pair.slice(0, i).trim();
      const value = pair.slice(i + 1).trim();
      const expired = attrs.some((a) => /max-age=0\b/i.test(a.trim())) || value === '';
      if (expired) this.jar.delete(name);
      else this.jar.set(name, value);
    }
  }

  async raw(path: string, init: RequestInit = {}): Promise<Response> {
    const headers = new Headers(init.headers);
    if (this.jar.size) headers.set('cookie', this.cookieHeader());
    const res = await fetch(`${BASE}${path}`, { ...init, headers, redirect: 'manual' });
    this.store(res);
    return res;
  }

  async json<T = any>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<JsonResponse<T>> {
    const res = await this.raw(path, {
      method,
      headers: { accept: 'application/json', ...(body !== undefined ? { 'content-type': 'application/json' } : {}), ...headers },
      body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
    });
    const text = await res.text();
    let parsed: any = text;
    try {
      parsed = JSON.parse(text);
    } catch {}
    return { status: res.status, body: parsed, headers: res.headers };
  }

  get<T = any>(path: string) {
    return this.json<T>('GET', path);
  }
  post<T = any>(path: string, body?: unknown) {
    return this.json<T>('POST', path, body ?? {});
  }

  async page(path: string): Promise<{ status: number; html: string; location: string | null }> {
    const res = await this.raw(path, { headers: { accept: 'text/html' } });
    return { status: res.status, html: await res.text(), location: res.headers.get('location') };
  }

  /** Signs in with e-mail and password; returns next-auth's answer ({ url } with `error=` on failure). */
  async signIn(email: string, password: string): Promise<{ ok: boolean; error: string | null }> {
    const csrf = await this.json<{ csrfToken: string }>('GET', '/api/auth/csrf');
    const res = await this.raw('/api/auth/callback/credentials', {
      method: 'POST',
      headers: { 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ csrfToken: csrf.body.csrfToken, email, password, json: 'true' }).toString(),
    });
    const body = (await res.json().catch(() => ({}))) as { url?: string };
    const url = new URL(body.url ?? BASE, BASE);
    const error = url.searchParams.get('error');
    return { ok: res.status === 200 && !error && this.jar.has('excursion.session'), error };
  }
}

/** A client already signed in. */
export async function signedIn(email: string, password = DEMO_PASSWORD): Promise<Client> {
  const c = new Client();
  const r = await c.signIn(email, password);
  if (!r.ok) throw new Error(`sign-in as ${email} failed: ${r.error}`);
  return c;
}

export const DEMO = {
  admin: 'admin@tempo-ft.example',
  dataManager: 'datamanager@tempo-ft.example',
  coordinatorHHC: 'coordinator.hhc@tempo-ft.example',
  coordinatorMLB: 'coordinator.mlb@tempo-ft.example',
  therapistHHC: 'therapist.hhc@tempo-ft.example',
  assessorHHC: 'assessor.hhc@tempo-ft.example',
  investigator: 'investigator@tempo-ft.example',
  monitor: 'monitor@tempo-ft.example',
  statistician: 'statistician@tempo-ft.example',
} as const;
