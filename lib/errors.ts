/**
 * The closed catalogue of error codes. Every expected failure is an AppError with one of these codes;
 * route handlers answer `{ error: { code, message, fields? } }` with the status given here.
 */
export const ERROR_CODES = {
  bad_request: 400,
  malformed_json: 400,
  validation_failed: 400,
  invalid_input: 400,
  unauthenticated: 401,
  forbidden: 403,
  not_found: 404,
  conflict: 409,
  stale_version: 409,
  gone: 410,
  payload_too_large: 413,
  unsupported_media_type: 415,
  locked: 423,
  rate_limited: 429,
  internal: 500,
  db_unavailable: 503,
} as const;
export type ErrorCode = keyof typeof ERROR_CODES;

/** Per-field messages, keyed by a JSON Pointer or dotted path of the offending field. */
export type FieldErrors = Record<string, string>;

/** An expected failure with a message a person understands. */
export class AppError extends Error {
  readonly code: ErrorCode;
  readonly fields?: FieldErrors;
  readonly details?: Record<string, unknown>;
  constructor(code: ErrorCode, message: string, opts: { fields?: FieldErrors; details?: Record<string, unknown> } = {}) {
    super(message);
    this.name = 'AppError';
    this.code = code;
    this.fields = opts.fields;
    this.details = opts.details;
  }
  get status(): number {
    return ERROR_CODES[this.code];
  }
}

export const notFound = (what = 'The record') => new AppError('not_found', `${what} was not found.`);
export const forbidden = (msg = 'Your role does not allow this.') => new AppError('forbidden', msg);
