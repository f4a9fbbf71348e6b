// Reads messages captured by the local SMTP fake (scripts/mail-fake.ts).
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';

export type Captured = { id: string; receivedAt: string; from: string; to: string[]; subject: string; text: string };

const dir = () => path.join(process.env.TEST_DATA_DIR ?? '.data-test', 'mail');

export async function allMail(): Promise<Captured[]> {
  let files: string[] = [];
  try {
    files = (await readdir(dir())).filter((f) => f.endsWith('.json')).sort();
  } catch {
    return [];
  }
  return Promise.all(files.map(async (f) => JSON.parse(await readFile(path.join(dir(), f), 'utf8')) as Captured));
}

/** Waits until a message to `to` matching `match` arrives (the fake writes asynchronously). */
export async function waitForMail(to: string, match: (m: Captured) => boolean = () => true, timeoutMs = 10_000): Promise<Captured> {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const m = (await allMail()).reverse().find((x) => x.to.includes(to) && match(x));
    if (m) return m;
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`no e-mail to ${to} within ${timeoutMs} ms`);
}
