// The CSV bundle: a zip (archiver) with one RFC 4180 file per table of the spreadsheet export, each with one header
// row of column keys (labels are in dictionary.csv for items and in the spreadsheet's second header row).
import { Readable, type Writable } from 'node:stream';
import { ZipArchive } from 'archiver';
import { dataTables, summaryRows, type ExportContext } from './source';

/** One field, quoted when it holds a comma, a quote or a line break (RFC 4180 §2.5–2.7); null is empty. */
export function csvField(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'object' ? JSON.stringify(v) : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** One record with CRLF, as RFC 4180 §2.1 asks. */
export const csvLine = (cells: unknown[]) => `${cells.map(csvField).join(',')}\r\n`;

async function* chunked(header: string[], rows: AsyncIterable<unknown[]>): AsyncGenerator<string> {
  let buf = csvLine(header);
  for await (const r of rows) {
    buf += csvLine(r);
    if (buf.length >= 64 * 1024) {
      yield buf;
      buf = '';
    }
  }
  if (buf) yield buf;
}

/** Streams the zip to `out`; entries are produced one after another as the archive reads them. */
export async function writeCsvZip(ctx: ExportContext, out: Writable): Promise<void> {
  const zip = new ZipArchive({ zlib: { level: 6 } });
  const done = new Promise<void>((resolve, reject) => {
    out.on('finish', resolve);
    out.on('close', resolve);
    out.on('error', reject);
    zip.on('error', reject);
  });
  zip.pipe(out);
  async function* summary() {
    yield csvLine(['key', 'value']);
    for (const [k, v] of summaryRows(ctx)) yield csvLine([k, v]);
  }
  zip.append(Readable.from(summary()), { name: 'snapshot.csv' });
  for (const t of dataTables(ctx)) {
    zip.append(Readable.from(chunked(t.columns.map((c) => c.key), t.rows())), { name: `${t.name}.csv` });
  }
  await zip.finalize();
  await done;
}
