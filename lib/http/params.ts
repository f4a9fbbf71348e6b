import { AppError } from '@/lib/errors';

/** A positive integer id from a URL segment, or 404 (ids that cannot exist are simply not found). */
export function idParam(v: string | string[] | undefined, what: string): number {
  const n = Number(v);
  if (typeof v !== 'string' || !/^\d{1,10}$/.test(v) || !Number.isSafeInteger(n) || n <= 0) throw new AppError('not_found', `${what} was not found.`);
  return n;
}

/** The visit and instance of a CRF slot from the query string. */
export function slotParams(sp: URLSearchParams): { visitKey: string; instance: number } {
  const visitKey = sp.get('visit') ?? '';
  if (!/^[a-z0-9_]{0,40}$/.test(visitKey)) throw new AppError('bad_request', 'The visit key is not valid.');
  const inst = sp.get('instance');
  const instance = inst === null ? 1 : Number(inst);
  if (!Number.isInteger(instance) || instance < 1 || instance > 999) throw new AppError('bad_request', 'The instance must be a whole number from 1 to 999.');
  return { visitKey, instance };
}

/** A form key from a URL segment. */
export function formKeyParam(v: string | string[] | undefined): string {
  if (typeof v !== 'string' || !/^[a-z][a-z0-9_]{1,59}$/.test(v)) throw new AppError('not_found', 'The form was not found.');
  return v;
}
