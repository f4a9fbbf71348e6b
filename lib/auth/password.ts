import bcrypt from 'bcryptjs';

export const PASSWORD_MIN_LENGTH = 12;
// bcrypt reads at most 72 bytes; refusing longer passwords avoids silently ignoring their tail.
export const PASSWORD_MAX_BYTES = 72;
const ROUNDS = 11;

/** Returns a message a person understands when the password breaks the policy, otherwise null. */
export function passwordProblem(pw: string): string | null {
  if (pw.length < PASSWORD_MIN_LENGTH) return `Use at least ${PASSWORD_MIN_LENGTH} characters.`;
  if (Buffer.byteLength(pw, 'utf8') > PASSWORD_MAX_BYTES) return `Use at most ${PASSWORD_MAX_BYTES} bytes (about 70 plain letters).`;
  if (/^(.)\1+$/.test(pw)) return 'Do not repeat one character.';
  return null;
}

export const hashPassword = (pw: string) => bcrypt.hash(pw, ROUNDS);
export const checkPassword = (pw: string, hash: string) => bcrypt.compare(pw, hash);
let dummy: string | undefined;
/** A hash compared against when the account does not exist, so the answer takes as long either way. */
export function dummyHash(): string {
  dummy ??= bcrypt.hashSync('no account has this password', ROUNDS);
  return dummy;
}
