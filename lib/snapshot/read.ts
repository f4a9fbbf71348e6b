import 'server-only';
import { createInterface } from 'node:readline';
import { getObject, getObjectStream } from '@/lib/storage';
import type { Manifest } from './index';

/** The manifest of a stored snapshot. */
export async function readManifest(prefix: string): Promise<Manifest> {
  return JSON.parse((await getObject(`${prefix}/manifest.json`)).toString('utf8')) as Manifest;
}

/** Streams the rows of one snapshot file, parsed, one line at a time (bounded memory). */
export async function* readRows<T = Record<string, unknown>>(prefix: string, name: string): AsyncGenerator<T> {
  const stream = await getObjectStream(`${prefix}/${name}`);
  const lines = createInterface({ input: stream as NodeJS.ReadableStream & AsyncIterable<string>, crlfDelay: Infinity });
  for await (const line of lines) if (line) yield JSON.parse(line) as T;
}

/** All rows of a small snapshot file (study, forms, participants, users). */
export async function readAll<T = Record<string, unknown>>(prefix: string, name: string): Promise<T[]> {
  const out: T[] = [];
  for await (const r of readRows<T>(prefix, name)) out.push(r);
  return out;
}
