// Backup and restore end to end: `run.mjs backup` of the running test instance (dump through the root socket plus the
// object store's files, manifest with SHA-256), then `run.mjs restore` into a second MariaDB on port 3358 with a fresh
// data directory: the same row count in every table, the same files (hashes), re-applied least-privilege grants and a
// verifying audit chain, read directly from the restored server. Restore refuses a non-empty database without
// --force, and refuses a backup whose files do not match the manifest.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, readFileSync, rmSync, writeFileSync, appendFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import path from 'node:path';
import { QueryTypes, Sequelize } from 'sequelize';
import * as mariadb from 'mariadb';
import { privDb } from '../support/db';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { coordinatorOf, PDF } from '../support/ready';
import { recordScreening } from '@/lib/screening';
import { storeConsentUpload } from '@/lib/uploads';
import { verifyAuditChain } from '@/lib/audit';
import { initDataDir, startDb, stopDb } from '../../scripts/mariadb.mjs';
import { hashTree, verifyBackup, type Manifest } from '../../scripts/backup.mjs';

const dataDir = process.env.TEST_DATA_DIR!;
const objectsDir = process.env.S3_FAKE_DIR ?? path.join(dataDir, 'objects');
const RESTORE_PORT = '3358';
const restoreDir = path.join(dataDir, `restore-${randomBytes(3).toString('hex')}`);
const outRoot = path.join(dataDir, 'backups');

/** Runs the bootstrap in one of its modes against a data directory, with nothing inherited that could redirect it. */
function runMode(args: string[], dir: string, port: string) {
  const env = { PATH: process.env.PATH ?? '', HOME: process.env.HOME ?? '', EXCURSION_DATA_DIR: dir, DB_PORT: port };
  const r = spawnSync(process.execPath, ['scripts/run.mjs', ...args], { env: env as unknown as NodeJS.ProcessEnv, encoding: 'utf8', timeout: 180_000 });
  return { status: r.status, out: `${r.stdout}${r.stderr}` };
}

async function tableCounts(db: Sequelize, schema: string) {
  const tables = await db.query<{ t: string }>('SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? ORDER BY table_name', { type: QueryTypes.SELECT, replacements: [schema] });
  const out: Record<string, number> = {};
  for (const { t } of tables) out[t] = Number((await db.query<{ n: number }>(`SELECT COUNT(*) AS n FROM \`${t}\``, { type: QueryTypes.SELECT }))[0].n);
  return out;
}

let restored: Sequelize | null = null;
let backupDir = '';
let sourceCounts: Record<string, number> = {};

beforeAll(async () => {
  // Something of every kind worth restoring: a participant with audit rows and an uploaded file.
  const study = await demoStudy();
  const hhc = await siteOf(study.id, 'HHC');
  const c = await coordinatorOf('HHC');
  const p = await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('BAK'), screeningDate: '2026-11-20', age: 44, sex: 'M', actor: { userId: c.id, role: 'coordinator' } });
  await storeConsentUpload({ studyId: study.id, siteId: hhc.id, participantId: p.id, bytes: PDF, actor: { userId: c.id, role: 'coordinator' } });
});

afterAll(async () => {
  await restored?.close();
  await stopDb(restoreDir);
  rmSync(restoreDir, { recursive: true, force: true });
});

describe('backup and restore', () => {
  it('backs up the running instance into a timestamped folder with a manifest of SHA-256 hashes', async () => {
    const r = runMode(['backup', '--out', outRoot], dataDir, process.env.DB_PORT!);
    expect(r.status, r.out).toBe(0);
    const m = r.out.match(/backup written to (\S+)/);
    expect(m, r.out).toBeTruthy();
    backupDir = path.resolve(m![1]);
    expect(path.basename(backupDir)).toMatch(/^\d{4}-\d\d-\d\dT\d\d-\d\d-\d\dZ$/);
    sourceCounts = await tableCounts(privDb(), process.env.DB_NAME ?? 'excursion');
    const manifest: Manifest = verifyBackup(backupDir);
    expect(manifest.files.map((f) => f.path)).toContain('database.sql');
    const objectFiles = manifest.files.filter((f) => f.path.startsWith('objects/'));
    expect(objectFiles.length).toBe(Object.keys(hashTree(objectsDir)).length);
    expect(objectFiles.some((f) => f.path.endsWith('.pdf._S3rver_object'))).toBe(true);
    const dump = readFileSync(path.join(backupDir, 'database.sql'), 'utf8');
    expect(dump).toMatch(/CREATE TABLE `audit_events`/);
    expect(sourceCounts.audit_events).toBeGreaterThan(0);
  });

  it('restores into a second, fresh MariaDB: same rows in every table, same files, grants, verifying chain', async () => {
    initDataDir(restoreDir);
    await startDb(restoreDir, RESTORE_PORT);
    const r = runMode(['restore', backupDir], restoreDir, RESTORE_PORT);
    expect(r.status, r.out).toBe(0);
    expect(r.out).toMatch(/audit chain verified: \d+ rows/);

    const secrets = JSON.parse(readFileSync(path.join(restoreDir, 'secrets.json'), 'utf8')) as { dbMigratePassword: string; dbAppPassword: string };
    restored = new Sequelize('excursion', 'excursion_migrate', secrets.dbMigratePassword, { dialect: 'mariadb', dialectModule: mariadb, host: '127.0.0.1', port: Number(RESTORE_PORT), logging: false, timezone: '+00:00', pool: { max: 2 } });
    expect(await tableCounts(restored, 'excursion')).toEqual(sourceCounts);
    expect(hashTree(path.join(restoreDir, 'objects'))).toEqual(hashTree(path.join(backupDir, 'objects')));
    expect(hashTree(path.join(restoreDir, 'objects'))).toEqual(hashTree(objectsDir));
    const chain = await verifyAuditChain(restored);
    expect(chain).toEqual({ ok: true, checked: sourceCounts.audit_events });

    // The application user was re-created with its least-privilege grants: it reads, but cannot rewrite the trail.
    const app = new Sequelize('excursion', 'excursion_app', secrets.dbAppPassword, { dialect: 'mariadb', dialectModule: mariadb, host: '127.0.0.1', port: Number(RESTORE_PORT), logging: false, pool: { max: 1 } });
    try {
      expect(Number((await app.query<{ n: number }>('SELECT COUNT(*) AS n FROM audit_events', { type: QueryTypes.SELECT }))[0].n)).toBe(sourceCounts.audit_events);
      await expect(app.query('UPDATE audit_events SET reason = NULL WHERE id = 1')).rejects.toThrow(/command denied/i);
    } finally {
      await app.close();
    }
  });

  it('refuses to restore over a database that is not empty, unless --force (which first saves what is there)', async () => {
    const again = runMode(['restore', backupDir], restoreDir, RESTORE_PORT);
    expect(again.status).toBe(1);
    expect(again.out).toMatch(/is not empty \(\d+ tables\)\. Restore refuses to overwrite it; add --force/);
    // Something only the restored copy has, to see --force replace it.
    await restored!.query("INSERT INTO access_log (at, event, ip) VALUES (UTC_TIMESTAMP(6), 'signout', '192.0.2.1')");
    const forced = runMode(['restore', backupDir, '--force', '--out', outRoot], restoreDir, RESTORE_PORT);
    expect(forced.status, forced.out).toBe(0);
    const safety = forced.out.match(/saved to (\S+) before being replaced/);
    expect(safety, forced.out).toBeTruthy();
    expect(existsSync(path.join(safety![1], 'manifest.json'))).toBe(true);
    await restored!.close();
    const secrets = JSON.parse(readFileSync(path.join(restoreDir, 'secrets.json'), 'utf8')) as { dbMigratePassword: string };
    restored = new Sequelize('excursion', 'excursion_migrate', secrets.dbMigratePassword, { dialect: 'mariadb', dialectModule: mariadb, host: '127.0.0.1', port: Number(RESTORE_PORT), logging: false, pool: { max: 2 } });
    expect(await tableCounts(restored, 'excursion')).toEqual(sourceCounts);
  });

  it('refuses a backup whose dump or files do not match the manifest', async () => {
    const copy = path.join(outRoot, `tampered-${randomBytes(3).toString('hex')}`);
    cpSync(backupDir, copy, { recursive: true });
    appendFileSync(path.join(copy, 'database.sql'), "\nINSERT INTO access_log (at, event) VALUES (UTC_TIMESTAMP(6), 'signout');\n");
    expect(() => verifyBackup(copy)).toThrow(/database\.sql: SHA-256 does not match the manifest/);
    const r = runMode(['restore', copy, '--force', '--out', outRoot], restoreDir, RESTORE_PORT);
    expect(r.status).toBe(1);
    expect(r.out).toMatch(/does not verify/);
    // A manifest naming a path outside the folder is refused too.
    const m = JSON.parse(readFileSync(path.join(copy, 'manifest.json'), 'utf8')) as Manifest;
    m.files.push({ path: '../../secrets.json', bytes: 1, sha256: '0'.repeat(64) });
    writeFileSync(path.join(copy, 'manifest.json'), JSON.stringify(m));
    expect(() => verifyBackup(copy)).toThrow(/path leaves the backup folder/);
    // The source instance is untouched by all this.
    expect(await tableCounts(privDb(), process.env.DB_NAME ?? 'excursion')).toEqual(sourceCounts);
  });
});
