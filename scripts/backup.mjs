// Backup and restore of one Excursion instance: a consistent dump of the application database taken through the
// root socket, plus a copy of the object store's files, with a manifest of SHA-256 hashes. The bootstrap
// (scripts/run.mjs backup|restore) wires these to the instance's paths; the resilience tests call them too.
// Node built-ins only.
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { copyFileSync, existsSync, mkdirSync, readdirSync, readFileSync, statSync, writeFileSync, openSync, closeSync } from 'node:fs';
import path from 'node:path';

export const MANIFEST = 'manifest.json';
export const DUMP = 'database.sql';
export const FORMAT = 'excursion-backup/1';

/** `2026-12-02T13-45-07Z`: a UTC timestamp that is also a portable folder name. */
export function stamp(d = new Date()) {
  return d.toISOString().replace(/\.\d{3}Z$/, 'Z').replace(/:/g, '-');
}

function sha256File(file) {
  return createHash('sha256').update(readFileSync(file)).digest('hex');
}

/** Every regular file under `dir`, as paths relative to it with forward slashes, sorted. */
export function listFiles(dir) {
  if (!existsSync(dir)) return [];
  const out = [];
  const walk = (rel) => {
    for (const e of readdirSync(path.join(dir, rel), { withFileTypes: true })) {
      const r = rel ? `${rel}/${e.name}` : e.name;
      if (e.isDirectory()) walk(r);
      else if (e.isFile()) out.push(r);
    }
  };
  walk('');
  return out.sort();
}

/** SHA-256 of every file under `dir`, keyed by relative path. */
export function hashTree(dir) {
  return Object.fromEntries(listFiles(dir).map((f) => [f, sha256File(path.join(dir, f))]));
}

/**
 * Writes `<outRoot>/<UTC timestamp>/`: `database.sql` (mariadb-dump --single-transaction --routines --triggers of
 * `database` through `socket` as root), `objects/` (a copy of `objectsDir`) and `manifest.json` (SHA-256 per file).
 * The dump is taken before the files are copied, so every upload the dump knows of is in the copy (the app stores
 * the object before it commits the row). Returns the backup folder.
 */
export function createBackup({ socket, database, objectsDir, outRoot, suffix = '' }) {
  let dir = path.join(outRoot, stamp() + suffix);
  for (let i = 2; existsSync(dir); i++) dir = path.join(outRoot, `${stamp()}${suffix}-${i}`);
  mkdirSync(dir, { recursive: true });
  const dumpFile = path.join(dir, DUMP);
  const r = spawnSync(
    'mariadb-dump',
    ['--no-defaults', `--socket=${socket}`, '-uroot', '--single-transaction', '--routines', '--triggers', '--hex-blob', '--default-character-set=utf8mb4', `--result-file=${dumpFile}`, database],
    { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] },
  );
  if (r.error) throw r.error;
  if (r.status !== 0) throw new Error(`mariadb-dump exited with ${r.status}: ${r.stderr}`);
  const objects = path.join(dir, 'objects');
  mkdirSync(objects, { recursive: true });
  for (const f of listFiles(objectsDir)) {
    mkdirSync(path.dirname(path.join(objects, f)), { recursive: true });
    copyFileSync(path.join(objectsDir, f), path.join(objects, f));
  }
  const files = [DUMP, ...listFiles(objects).map((f) => `objects/${f}`)].map((f) => ({ path: f, bytes: statSync(path.join(dir, f)).size, sha256: sha256File(path.join(dir, f)) }));
  const manifest = { format: FORMAT, createdAt: new Date().toISOString(), database, files };
  writeFileSync(path.join(dir, MANIFEST), JSON.stringify(manifest, null, 2) + '\n');
  return dir;
}

/** Reads a backup's manifest and checks every file against its SHA-256; throws naming what is missing or altered. */
export function verifyBackup(dir) {
  const mf = path.join(dir, MANIFEST);
  if (!existsSync(mf)) throw new Error(`${dir} has no ${MANIFEST}; it is not an Excursion backup.`);
  const manifest = JSON.parse(readFileSync(mf, 'utf8'));
  if (manifest.format !== FORMAT) throw new Error(`${mf}: unknown format ${JSON.stringify(manifest.format)} (expected ${FORMAT}).`);
  const problems = [];
  for (const f of manifest.files) {
    if (f.path.split('/').includes('..') || path.isAbsolute(f.path)) problems.push(`${f.path}: path leaves the backup folder`);
    else if (!existsSync(path.join(dir, f.path))) problems.push(`${f.path}: missing`);
    else if (sha256File(path.join(dir, f.path)) !== f.sha256) problems.push(`${f.path}: SHA-256 does not match the manifest`);
  }
  if (!manifest.files.some((f) => f.path === DUMP)) problems.push(`${DUMP}: not listed in the manifest`);
  if (problems.length) throw new Error(`The backup in ${dir} does not verify:\n  ${problems.join('\n  ')}`);
  return manifest;
}

/** Loads the dump into `database` through the root socket (the database must exist). */
export function loadDump({ socket, database, dir }) {
  const fd = openSync(path.join(dir, DUMP), 'r');
  try {
    const r = spawnSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '--default-character-set=utf8mb4', database], { stdio: [fd, 'pipe', 'pipe'], encoding: 'utf8' });
    if (r.error) throw r.error;
    if (r.status !== 0) throw new Error(`loading ${DUMP} failed (${r.status}): ${r.stderr}`);
  } finally {
    closeSync(fd);
  }
}

/** Copies the backup's object files into `objectsDir` (files already there with other names stay). */
export function restoreObjects({ dir, objectsDir }) {
  const from = path.join(dir, 'objects');
  const files = listFiles(from);
  for (const f of files) {
    mkdirSync(path.dirname(path.join(objectsDir, f)), { recursive: true });
    copyFileSync(path.join(from, f), path.join(objectsDir, f));
  }
  return files.length;
}
