import 'server-only';
import { readdir, readFile } from 'node:fs/promises';
import path from 'node:path';
import { config } from '@/lib/config';

/** A message captured by the local SMTP fake. */
export type CapturedMail = { id: string; receivedAt: string; from: string; to: string[]; subject: string; text: string };

/** Lists captured messages, newest first; empty when no capture directory is configured. */
export async function listCapturedMail(limit = 200): Promise<CapturedMail[]> {
  const dir = config.mailCaptureDir();
  if (!dir) return [];
  let files: string[];
  try {
    files = (await readdir(dir)).filter((f) => f.endsWith('.json')).sort().reverse().slice(0, limit);
  } catch {
    return [];
  }
  const out: CapturedMail[] = [];
  for (const f of files) out.push(JSON.parse(await readFile(path.join(dir, f), 'utf8')) as CapturedMail);
  return out;
}
