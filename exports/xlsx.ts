// The spreadsheet export: exceljs' streaming WorkbookWriter, fed row by row from the snapshot files.
// Sheets: the snapshot summary, participants, one sheet per form (item keys in row 1, labels in row 2, then a row per
// participant, visit and instance), the data dictionary, allocation, allocation schedule, unblinding register, audit trail.
import { once } from 'node:events';
import type { Writable } from 'node:stream';
import ExcelJS from 'exceljs';
import { dataTables, summaryRows, type ExportContext } from './source';

/** Options shared with the benchmark baseline, so both write the same kind of file. */
export const WORKBOOK_OPTIONS = { useSharedStrings: false, useStyles: false } as const;
/** Excel refuses longer cell texts; longer values (rare: whole-document audit values) are cut with a marker. */
export const MAX_CELL_TEXT = 32_000;

export const fitCell = (v: unknown) => (typeof v === 'string' && v.length > MAX_CELL_TEXT ? `${v.slice(0, MAX_CELL_TEXT)}…[truncated]` : v);

/**
 * Waits while the sheet's compressor or the destination is full, so rows are produced no faster than they are
 * compressed and sent. exceljs' sheet buffer writes into the zip entry without looking at its return value, so the
 * entry streams it pipes to are checked here (the buffer is exceljs' `_stream`, its consumers `pipes`).
 */
async function backpressure(ws: ExcelJS.Worksheet, out: Writable) {
  // Those entry streams come from the readable-stream package: their state is in _writableState.
  type EntryStream = Writable & { _writableState?: { needDrain?: boolean; ended?: boolean } };
  const pipes = (ws as unknown as { _stream?: { pipes?: EntryStream[] } })._stream?.pipes ?? [];
  for (const p of pipes) {
    const st = p._writableState;
    if ((p.writableNeedDrain ?? st?.needDrain) && !p.destroyed && !(p.writableEnded ?? st?.ended)) await once(p, 'drain');
  }
  if (out.writableNeedDrain && !out.destroyed) await once(out, 'drain');
  else await new Promise((r) => setImmediate(r));
}

/** Sheet names: at most 31 characters, unique. */
function sheetName(name: string, used: Set<string>) {
  let n = name.replace(/[\\/*?:[\]]/g, '_').slice(0, 31);
  for (let i = 2; used.has(n); i++) n = `${name.slice(0, 28)}~${i}`;
  used.add(n);
  return n;
}

/** Streams the whole workbook to `out` (ended when done). */
export async function writeXlsx(ctx: ExportContext, out: Writable): Promise<void> {
  const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream: out, ...WORKBOOK_OPTIONS });
  wb.creator = 'Excursion';
  const used = new Set<string>();
  const summary = wb.addWorksheet(sheetName('snapshot', used));
  summary.addRow(['key', 'value']).commit();
  for (const [k, v] of summaryRows(ctx)) summary.addRow([k, fitCell(v) as ExcelJS.CellValue]).commit();
  summary.commit();
  for (const table of dataTables(ctx)) {
    const ws = wb.addWorksheet(sheetName(table.name, used));
    ws.addRow(table.columns.map((c) => c.key)).commit();
    ws.addRow(table.columns.map((c) => c.label)).commit();
    let n = 0;
    for await (const row of table.rows()) {
      ws.addRow(row.map(fitCell) as ExcelJS.CellValue[]).commit();
      if (++n % 200 === 0) await backpressure(ws, out);
    }
    ws.commit();
  }
  await wb.commit();
}
