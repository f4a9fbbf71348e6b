'use client';

/** The error shape every API route answers with. */
export type ApiError = { code: string; message: string; fields?: Record<string, string>; requestId?: string };
export type ApiResult<T> = { ok: true; data: T } | { ok: false; status: number; error: ApiError };

/** SWR fetcher: throws the API's error so the component can show its message. */
export async function getJson<T>(url: string): Promise<T> {
  const r = await fetch(url, { headers: { accept: 'application/json' } });
  const body = await r.json().catch(() => null);
  if (!r.ok) throw Object.assign(new Error(body?.error?.message ?? `The server answered ${r.status}.`), { status: r.status, error: body?.error });
  return body as T;
}

/** Sends JSON and returns the data or the API's error, never throws for an HTTP error. */
export async function sendJson<T>(method: 'POST' | 'PATCH' | 'PUT' | 'DELETE', url: string, body?: unknown): Promise<ApiResult<T>> {
  let r: Response;
  try {
    r = await fetch(url, { method, headers: { 'content-type': 'application/json', accept: 'application/json' }, body: body === undefined ? undefined : JSON.stringify(body) });
  } catch {
    return { ok: false, status: 0, error: { code: 'network', message: 'The server could not be reached. Check your connection; nothing was saved.' } };
  }
  const data = await r.json().catch(() => null);
  if (r.ok) return { ok: true, data: data as T };
  return { ok: false, status: r.status, error: data?.error ?? { code: 'internal', message: `The server answered ${r.status}.` } };
}

export const postJson = <T,>(url: string, body?: unknown) => sendJson<T>('POST', url, body);
