#!/usr/bin/env node
// Excursion bootstrap: one entry point for `npm start`, `npm run dev`, `npm test`,
// `npm run db:migrate`, `npm run db:status`, `npm run audit:verify`, `npm run backup` and `npm run restore`.
// Uses Node built-ins only, because it runs before `npm ci` has installed anything.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, writeFileSync, rmSync, statSync, readdirSync } from 'node:fs';
import { createHash, randomBytes } from 'node:crypto';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import net from 'node:net';
import { createBackup, verifyBackup, loadDump, restoreObjects } from './backup.mjs';
import { initDataDir, pingDb as pingMariadb, startDb as startMariadb, which } from './mariadb.mjs';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const mode = process.argv[2] ?? 'start';
const isTest = mode === 'test';
// `bench` boots like `test` (fresh data directory, own ports, demo data, build, serve) with EXCURSION_BENCH=1 for the
// server, then runs bench/<name>.ts for each name given (all of bench/*.ts when none is).
const isBench = mode === 'bench';
const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

// EXCURSION_DATA_DIR points the commands at another data directory (the restore test's second server, for one).
const dataDir = process.env.EXCURSION_DATA_DIR && !isTest && !isBench ? path.resolve(process.env.EXCURSION_DATA_DIR) : path.join(root, isTest ? '.data-test' : isBench ? '.data-bench' : '.data');
const dbDir = path.join(dataDir, 'mysql');
const socket = path.join(dataDir, 'mysqld.sock');
const dbLog = path.join(dataDir, 'mariadb.log');
const mailDir = path.join(dataDir, 'mail');
const storageDir = path.join(dataDir, 'objects');

const env = { ...process.env };
env.DB_HOST = env.DB_HOST ?? '127.0.0.1';
env.DB_PORT = isTest ? env.TEST_DB_PORT ?? '3317' : isBench ? env.BENCH_DB_PORT ?? '3327' : env.DB_PORT ?? '3307';
env.DB_NAME = env.DB_NAME ?? 'excursion';
env.APP_PORT = isTest ? env.TEST_APP_PORT ?? '3100' : isBench ? env.BENCH_APP_PORT ?? '3110' : env.APP_PORT ?? '3000';
env.SMTP_HOST = env.SMTP_HOST ?? '127.0.0.1';
env.SMTP_PORT = isTest ? env.TEST_SMTP_PORT ?? '2626' : isBench ? env.BENCH_SMTP_PORT ?? '2636' : env.SMTP_PORT ?? '2525';
env.MAIL_FROM = env.MAIL_FROM ?? 'Excursion <no-reply@excursion.invalid>';
env.MAIL_CAPTURE_DIR = env.MAIL_CAPTURE_DIR ?? mailDir;
env.NEXTAUTH_URL = env.NEXTAUTH_URL ?? `http://127.0.0.1:${env.APP_PORT}`;
env.APP_BASE_URL = env.APP_BASE_URL ?? env.NEXTAUTH_URL;
env.S3_ENDPOINT = env.S3_ENDPOINT ?? `http://127.0.0.1:${isTest ? env.TEST_S3_PORT ?? '4578' : isBench ? env.BENCH_S3_PORT ?? '4588' : '4568'}`;
env.S3_BUCKET = env.S3_BUCKET ?? 'excursion';
env.S3_REGION = env.S3_REGION ?? 'us-east-1';
env.S3_ACCESS_KEY_ID = env.S3_ACCESS_KEY_ID ?? 'S3RVER';
env.S3_SECRET_ACCESS_KEY = env.S3_SECRET_ACCESS_KEY ?? 'S3RVER';
env.S3_FAKE_DIR = env.S3_FAKE_DIR ?? storageDir;
env.NEXT_TELEMETRY_DISABLED = '1';
if (isTest || isBench) env.TZ = 'UTC';

const log = (...a) => console.log('[excursion]', ...a);
const fail = (msg) => {
  console.error(`\n[excursion] ${msg}\n`);
  // Leave nothing running behind a failed start.
  shuttingDown = true;
  for (const c of children) if (c.exitCode === null) c.kill('SIGTERM');
  if (dbChild) spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '-uroot', 'shutdown'], { stdio: 'ignore' });
  process.exit(1);
};

function run(cmd, args, opts = {}) {
  const r = spawnSync(cmd, args, { stdio: opts.capture ? ['pipe', 'pipe', 'pipe'] : 'inherit', cwd: root, env, input: opts.input, encoding: 'utf8' });
  if (r.error) throw r.error;
  if (r.status !== 0 && !opts.allowFail) {
    const detail = opts.capture ? `\n${r.stdout ?? ''}${r.stderr ?? ''}` : '';
    fail(`${cmd} ${args.join(' ')} exited with ${r.status}${detail}`);
  }
  return r;
}

// ---------------------------------------------------------------- npm dependencies
function ensureNodeModules() {
  const marker = path.join(root, 'node_modules', '.package-lock.json');
  const lock = path.join(root, 'package-lock.json');
  if (existsSync(marker) && statSync(marker).mtimeMs >= statSync(lock).mtimeMs - 1000) return;
  log('installing npm dependencies (npm ci)…');
  run('npm', ['ci', '--no-audit', '--no-fund']);
}

// ---------------------------------------------------------------- system packages
function aptInstall(pkgs, why) {
  if (!isRoot) fail(`${why} is missing. Install it first, for example: sudo apt-get install ${pkgs.join(' ')}`);
  log(`installing ${pkgs.join(' ')} with apt-get…`);
  run('apt-get', ['update', '-qq']);
  run('apt-get', ['install', '-y', '-qq', '--no-install-recommends', ...pkgs], { capture: false });
}

function ensureMariadb() {
  if (!which('mariadbd') || !which('mariadb-install-db')) aptInstall(['mariadb-server', 'mariadb-client'], 'MariaDB (mariadbd)');
  if (!which('mariadbd')) fail('mariadbd is still missing after installing mariadb-server.');
}

export function ensureChromium() {
  if (!existsSync('/usr/bin/chromium')) aptInstall(['chromium', 'fonts-dejavu-core'], 'Chromium (/usr/bin/chromium) for the browser tests');
}

// ---------------------------------------------------------------- secrets
function loadSecrets() {
  mkdirSync(dataDir, { recursive: true });
  const file = path.join(dataDir, 'secrets.json');
  let s = {};
  if (existsSync(file)) s = JSON.parse(readFileSync(file, 'utf8'));
  const gen = () => randomBytes(24).toString('base64url');
  s.dbAppPassword ??= gen();
  s.dbMigratePassword ??= gen();
  s.nextauthSecret ??= randomBytes(32).toString('base64url');
  writeFileSync(file, JSON.stringify(s, null, 2), { mode: 0o600 });
  // Secrets come from the environment; the generated file only fills what the environment leaves unset.
  env.DB_APP_USER = env.DB_APP_USER ?? 'excursion_app';
  env.DB_APP_PASSWORD = env.DB_APP_PASSWORD ?? s.dbAppPassword;
  env.DB_MIGRATE_USER = env.DB_MIGRATE_USER ?? 'excursion_migrate';
  env.DB_MIGRATE_PASSWORD = env.DB_MIGRATE_PASSWORD ?? s.dbMigratePassword;
  env.NEXTAUTH_SECRET = env.NEXTAUTH_SECRET ?? s.nextauthSecret;
  env.DB_USER = env.DB_APP_USER;
  env.DB_PASSWORD = env.DB_APP_PASSWORD;
}

// ---------------------------------------------------------------- MariaDB
function sql(statements, { capture = false, database } = {}) {
  const args = ['--no-defaults', `--socket=${socket}`, '-uroot', '--batch', '--skip-column-names'];
  if (database) args.push(database);
  return run('mariadb', args, { input: statements, capture: true, allowFail: false }).stdout ?? (capture ? '' : '');
}

const pingDb = () => pingMariadb(dataDir);

function portFree(port) {
  return new Promise((resolve) => {
    const s = net.createServer();
    s.once('error', () => resolve(false));
    s.listen(Number(port), '127.0.0.1', () => s.close(() => resolve(true)));
  });
}

let dbChild = null;
async function startDb() {
  mkdirSync(dataDir, { recursive: true });
  if (!existsSync(path.join(dbDir, 'mysql'))) log(`initialising the MariaDB data directory in ${path.relative(root, dbDir)}/…`);
  try {
    initDataDir(dataDir);
  } catch (e) {
    fail(e.message);
  }
  if (pingDb()) {
    log('MariaDB is already running on this data directory; using it.');
    return;
  }
  if (!(await portFree(env.DB_PORT))) fail(`Port ${env.DB_PORT} is taken by another program. Set DB_PORT to a free port.`);
  try {
    dbChild = await startMariadb(dataDir, env.DB_PORT, {
      cwd: root,
      onExit: (code) => {
        if (!shuttingDown) console.error(`[excursion] MariaDB stopped unexpectedly (exit ${code}); see ${path.relative(root, dbLog)}`);
        dbChild = null;
      },
    });
  } catch (e) {
    fail(e.message);
  }
}

const q = (s) => `'${String(s).replace(/\\/g, '\\\\').replace(/'/g, "\\'")}'`;

function provisionDb() {
  const db = env.DB_NAME;
  const mig = env.DB_MIGRATE_USER;
  const app = env.DB_APP_USER;
  sql(`
CREATE DATABASE IF NOT EXISTS \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;
CREATE USER IF NOT EXISTS ${q(mig)}@'127.0.0.1' IDENTIFIED BY ${q(env.DB_MIGRATE_PASSWORD)};
ALTER USER ${q(mig)}@'127.0.0.1' IDENTIFIED BY ${q(env.DB_MIGRATE_PASSWORD)};
GRANT SELECT, INSERT, UPDATE, DELETE, CREATE, ALTER, DROP, INDEX, REFERENCES, CREATE VIEW, SHOW VIEW, TRIGGER, LOCK TABLES ON \`${db}\`.* TO ${q(mig)}@'127.0.0.1';
CREATE USER IF NOT EXISTS ${q(app)}@'127.0.0.1' IDENTIFIED BY ${q(env.DB_APP_PASSWORD)};
ALTER USER ${q(app)}@'127.0.0.1' IDENTIFIED BY ${q(env.DB_APP_PASSWORD)};
`);
}

// Tables the application may only append to and read: MariaDB itself refuses UPDATE and DELETE.
const APPEND_ONLY = new Set(JSON.parse(readFileSync(path.join(root, 'migrations', 'append-only.json'), 'utf8')).tables);
// Tables the application reads but never writes.
const READ_ONLY = new Set(['SequelizeMeta']);

/** Least privilege for the application user: table by table, re-applied after every migration. */
function applyAppGrants() {
  const db = env.DB_NAME;
  const app = `${q(env.DB_APP_USER)}@'127.0.0.1'`;
  const tables = sql(`SELECT table_name FROM information_schema.tables WHERE table_schema = ${q(db)};`)
    .split('\n')
    .map((t) => t.trim())
    .filter(Boolean);
  const stmts = [`REVOKE ALL PRIVILEGES, GRANT OPTION FROM ${app};`];
  for (const t of tables) {
    const privs = APPEND_ONLY.has(t) ? 'SELECT, INSERT' : READ_ONLY.has(t) ? 'SELECT' : 'SELECT, INSERT, UPDATE, DELETE';
    stmts.push(`GRANT ${privs} ON \`${db}\`.\`${t}\` TO ${app};`);
  }
  stmts.push('FLUSH PRIVILEGES;');
  sql(stmts.join('\n'));
}

async function stopDb() {
  if (!pingDb()) return;
  spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '-uroot', 'shutdown'], { stdio: 'ignore' });
  const until = Date.now() + 30_000;
  while (Date.now() < until && (pingDb() || dbChild)) await new Promise((r) => setTimeout(r, 200));
}

// ---------------------------------------------------------------- app steps
const tsx = path.join(root, 'node_modules', '.bin', 'tsx');
// Scripts import lib/ modules marked `server-only`; the react-server condition lets them load outside Next.
const ts = (file, ...rest) => ['--conditions=react-server', file, ...rest];
const nextBin = path.join(root, 'node_modules', '.bin', 'next');

function migrate(cmd = 'up') {
  const migEnv = { DB_USER: env.DB_MIGRATE_USER, DB_PASSWORD: env.DB_MIGRATE_PASSWORD };
  const r = spawnSync(tsx, ts('scripts/migrate.ts', cmd), { cwd: root, env: { ...env, ...migEnv }, stdio: 'inherit' });
  if (r.status !== 0) fail(`migrations failed (${cmd})`);
  applyAppGrants();
}

function seedDemo() {
  const r = spawnSync(tsx, ts('scripts/seed-demo.ts'), { cwd: root, env, stdio: 'inherit' });
  if (r.status !== 0) fail('loading the demo study failed');
  const f = spawnSync(tsx, ts('scripts/load-forms.ts'), { cwd: root, env, stdio: 'inherit' });
  if (f.status !== 0) fail('loading the forms in forms/ failed');
}

// Invented participants for the demo study; the script itself does nothing when the study already has participants.
function simulateDemo(extra = []) {
  const r = spawnSync(tsx, ts('scripts/simulate-demo.ts', ...extra), { cwd: root, env, stdio: 'inherit' });
  if (r.status !== 0) fail('the demo simulation failed');
}

const BUILD_INPUTS = ['app', 'components', 'lib', 'models', 'forms', 'exports', 'public', 'types', 'next.config.mjs', 'tailwind.config.ts', 'postcss.config.mjs', 'tsconfig.json', 'package-lock.json', 'proxy.ts'];
function sourceHash() {
  const h = createHash('sha256');
  const walk = (p) => {
    if (!existsSync(p)) return;
    const st = statSync(p);
    if (st.isDirectory()) for (const e of readdirSync(p).sort()) walk(path.join(p, e));
    else h.update(path.relative(root, p)).update('\0').update(readFileSync(p)).update('\0');
  };
  for (const i of BUILD_INPUTS) walk(path.join(root, i));
  return h.digest('hex');
}

function buildIfStale() {
  const stamp = path.join(root, '.next', 'excursion-source.sha256');
  const want = sourceHash();
  if (existsSync(path.join(root, '.next', 'BUILD_ID')) && existsSync(stamp) && readFileSync(stamp, 'utf8') === want) return;
  log('building the web app (next build)…');
  const r = spawnSync(nextBin, ['build'], { cwd: root, env: { ...env, NODE_ENV: 'production' }, stdio: 'inherit' });
  if (r.status !== 0) fail('next build failed');
  writeFileSync(stamp, want);
}

const children = [];
function spawnChild(name, cmd, args, extraEnv = {}, quiet = false) {
  const c = spawn(cmd, args, { cwd: root, env: { ...env, ...extraEnv }, stdio: quiet ? ['ignore', 'ignore', 'inherit'] : 'inherit' });
  c.on('exit', (code, sig) => {
    if (!shuttingDown) {
      console.error(`[excursion] ${name} stopped (${sig ?? code})`);
      shutdown(1);
    }
  });
  children.push(c);
  return c;
}

async function waitForHttp(url, timeoutMs = 90_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    try {
      const r = await fetch(url);
      if (r.status < 500) return;
    } catch {}
    await new Promise((r) => setTimeout(r, 300));
  }
  fail(`${url} did not answer within ${timeoutMs / 1000} s`);
}

async function waitForPort(port, timeoutMs = 30_000) {
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    const ok = await new Promise((resolve) => {
      const s = net.connect(Number(port), '127.0.0.1', () => { s.end(); resolve(true); });
      s.on('error', () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  fail(`nothing listens on port ${port} after ${timeoutMs / 1000} s`);
}

async function startSideServices() {
  mkdirSync(mailDir, { recursive: true });
  mkdirSync(storageDir, { recursive: true });
  spawnChild('mail fake', tsx, ts('scripts/mail-fake.ts'), {}, isTest);
  await waitForPort(env.SMTP_PORT);
  // Only the local fake is started here; a configured external S3 endpoint is used as it is.
  if (new URL(env.S3_ENDPOINT).hostname === '127.0.0.1' && !process.env.S3_ENDPOINT) {
    spawnChild('object store fake', process.execPath, ['scripts/s3-fake.mjs'], {}, isTest);
    await waitForPort(new URL(env.S3_ENDPOINT).port);
  }
}

let shuttingDown = false;
async function shutdown(code = 0) {
  if (shuttingDown) return;
  shuttingDown = true;
  for (const c of children) if (c.exitCode === null) c.kill('SIGTERM');
  await Promise.all(children.map((c) => (c.exitCode === null ? new Promise((r) => { c.once('exit', r); setTimeout(r, 8000); }) : null)));
  await stopDb();
  process.exit(code);
}
process.on('SIGINT', () => shutdown(0));
process.on('SIGTERM', () => shutdown(0));

// Visit reminders: once shortly after start, then every hour (the job is idempotent).
function startReminderTimer() {
  const once = () => {
    if (shuttingDown) return;
    const c = spawn(tsx, ts('scripts/reminders.ts'), { cwd: root, env, stdio: ['ignore', 'inherit', 'inherit'] });
    c.on('error', (e) => console.error('[excursion] reminders failed to start', e));
  };
  setTimeout(once, 30_000).unref();
  setInterval(once, 60 * 60_000).unref();
}

function printWelcome() {
  const accounts = JSON.parse(readFileSync(path.join(root, 'scripts', 'demo-accounts.json'), 'utf8'));
  console.log(`\n  Excursion is running at ${env.NEXTAUTH_URL}\n`);
  console.log('  Demo accounts (invented people, demo only; every password is the one below):');
  for (const a of accounts.users) console.log(`    ${a.role.padEnd(13)} ${a.email.padEnd(38)} ${a.site ?? 'all sites'}`);
  console.log(`    password: ${accounts.password}`);
  console.log(`\n  Captured e-mail: ${env.NEXTAUTH_URL}/dev/mail   Stop with Ctrl-C.\n`);
}

// ---------------------------------------------------------------- backup and restore
const flag = (name) => process.argv.slice(3).includes(name);
const option = (name) => {
  const a = process.argv.slice(3);
  const i = a.indexOf(name);
  return i >= 0 ? a[i + 1] : undefined;
};
const objectsDir = () => path.resolve(env.S3_FAKE_DIR);
const externalStore = () => Boolean(process.env.S3_ENDPOINT);

function tableCount() {
  return Number(sql(`SELECT COUNT(*) FROM information_schema.tables WHERE table_schema = ${q(env.DB_NAME)};`).trim());
}

/** `npm run backup [-- --out DIR]`: dump + object files + manifest into backups/<UTC timestamp>/. */
function backupNow() {
  const outRoot = path.resolve(option('--out') ?? path.join(root, 'backups'));
  if (externalStore()) log(`S3_ENDPOINT is set: files in that object store are not copied (use the provider's own versioning or replication); only the database is dumped.`);
  const dir = createBackup({ socket, database: env.DB_NAME, objectsDir: externalStore() ? path.join(dataDir, '.no-objects') : objectsDir(), outRoot });
  const manifest = JSON.parse(readFileSync(path.join(dir, 'manifest.json'), 'utf8'));
  log(`backup written to ${path.relative(process.cwd(), dir) || dir} (${manifest.files.length} files, SHA-256 of each in manifest.json)`);
  return dir;
}

/** `npm run restore -- DIR [--force] [--out DIR]`: verify the manifest, load into an empty database, copy files, grants, audit check. */
function restoreNow() {
  const dirArg = process.argv.slice(3).find((a, i, all) => !a.startsWith('--') && all[i - 1] !== '--out');
  if (!dirArg) fail('Name the backup folder: npm run restore -- backups/<timestamp> [--force]');
  const dir = path.resolve(dirArg);
  try {
    verifyBackup(dir);
  } catch (e) {
    fail(e.message);
  }
  log(`backup ${dir} verifies against its manifest`);
  const tables = tableCount();
  if (tables > 0) {
    if (!flag('--force')) fail(`The database ${env.DB_NAME} is not empty (${tables} tables). Restore refuses to overwrite it; add --force to replace it (a backup of its current contents is taken first).`);
    const safety = createBackup({ socket, database: env.DB_NAME, objectsDir: objectsDir(), outRoot: path.resolve(option('--out') ?? path.join(root, 'backups')), suffix: '-before-restore' });
    log(`--force: the current contents were saved to ${safety} before being replaced`);
    sql(`DROP DATABASE \`${env.DB_NAME}\`;`);
    provisionDb();
  }
  try {
    loadDump({ socket, database: env.DB_NAME, dir });
    const n = restoreObjects({ dir, objectsDir: objectsDir() });
    log(`database loaded; ${n} object files copied to ${path.relative(root, objectsDir()) || objectsDir()}`);
  } catch (e) {
    fail(e.message);
  }
  // Forward-only migrations bring an older backup up to this version; grants are re-applied after them.
  migrate('up');
  const v = spawnSync(tsx, ts('scripts/audit-verify.ts'), { cwd: root, env, stdio: 'inherit' });
  if (v.status !== 0) fail('the restored audit chain does not verify');
  log('restore complete');
}

// ---------------------------------------------------------------- modes
async function main() {
  if (mode === 'test' || mode === 'bench') {
    rmSync(dataDir, { recursive: true, force: true });
  }
  ensureNodeModules();
  ensureMariadb();
  loadSecrets();

  if (mode === 'migrate' || mode === 'status' || mode === 'audit-verify' || mode === 'reminders' || mode === 'backup' || mode === 'restore') {
    const wasRunning = pingDb();
    if (!wasRunning) await startDb();
    provisionDb();
    if (mode === 'backup') backupNow();
    else if (mode === 'restore') restoreNow();
    else if (mode === 'migrate') migrate('up');
    else if (mode === 'status') migrate('status');
    else {
      const r = spawnSync(tsx, ts(mode === 'reminders' ? 'scripts/reminders.ts' : 'scripts/audit-verify.ts'), { cwd: root, env, stdio: 'inherit' });
      process.exitCode = r.status ?? 1;
    }
    shuttingDown = true;
    if (!wasRunning) await stopDb();
    process.exit(process.exitCode ?? 0);
  }

  if (mode === 'simulate') {
    // `npm run demo:simulate`: uses a running `npm start` (database, mail and object store) when there is one.
    const wasRunning = pingDb();
    if (!wasRunning) await startDb();
    provisionDb();
    migrate('up');
    seedDemo();
    if (await portFree(env.SMTP_PORT)) await startSideServices();
    simulateDemo(process.argv.slice(3));
    shuttingDown = true;
    for (const c of children) if (c.exitCode === null) c.kill('SIGTERM');
    if (!wasRunning) await stopDb();
    process.exit(0);
  }

  await startDb();
  provisionDb();
  migrate('up');
  seedDemo();


  if (mode === 'dev') {
    await startSideServices();
    spawnChild('next dev', nextBin, ['dev', '-H', '127.0.0.1', '-p', env.APP_PORT]);
    await waitForHttp(`${env.NEXTAUTH_URL}/api/health`, 180_000);
    printWelcome();
    return;
  }

  if (mode === 'test') {
    ensureChromium();
    const sc = spawnSync(process.execPath, ['scripts/check-structure.mjs'], { cwd: root, env, stdio: 'inherit' });
    if (sc.status !== 0) return shutdown(1);
    log('type-checking (tsc --noEmit)…');
    const tc = spawnSync(path.join(root, 'node_modules', '.bin', 'tsc'), ['--noEmit'], { cwd: root, env, stdio: 'inherit' });
    if (tc.status !== 0) {
      console.error('[excursion] type-check failed');
      return shutdown(1);
    }
    buildIfStale();
    await startSideServices();
    spawnChild('next start', nextBin, ['start', '-H', '127.0.0.1', '-p', env.APP_PORT], { NODE_ENV: 'production' }, true);
    await waitForHttp(`${env.NEXTAUTH_URL}/api/health`);
    const testEnv = {
      ...env,
      TEST_BASE_URL: env.NEXTAUTH_URL,
      DB_PRIV_USER: env.DB_MIGRATE_USER,
      DB_PRIV_PASSWORD: env.DB_MIGRATE_PASSWORD,
      TEST_DATA_DIR: dataDir,
      TEST_OUTPUT_DIR: path.join(root, 'test-output'),
    };
    const vitest = spawn(path.join(root, 'node_modules', '.bin', 'vitest'), ['run', ...process.argv.slice(3)], { cwd: root, env: testEnv, stdio: 'inherit' });
    const code = await new Promise((r) => vitest.on('exit', (c) => r(c ?? 1)));
    return shutdown(code);
  }

  if (mode === 'bench') {
    const args = process.argv.slice(3);
    const names = args.filter((a) => !a.startsWith('--') && !/^\d+$/.test(a));
    // Options (--x) go to every benchmark script; bench/export.ts reads --fresh, --participants N and the like.
    const flags = args.filter((a) => a.startsWith('--') || /^\d+$/.test(a));
    const files = (names.length ? names.map((n) => `${n}.ts`) : readdirSync(path.join(root, 'bench')).filter((f) => f.endsWith('.ts')).sort()).map((f) => path.join('bench', f));
    for (const f of files) if (!existsSync(path.join(root, f))) fail(`no benchmark ${f}`);
    buildIfStale();
    await startSideServices();
    // BENCH_CPU_PROFILE=<dir>: the server writes a V8 CPU profile there when it stops (open it in Chrome's DevTools).
    const [cmd, pre] = env.BENCH_CPU_PROFILE
      ? [process.execPath, ['--cpu-prof', '--cpu-prof-dir', path.resolve(env.BENCH_CPU_PROFILE), path.join(root, 'node_modules', 'next', 'dist', 'bin', 'next')]]
      : [nextBin, []];
    spawnChild('next start', cmd, [...pre, 'start', '-H', '127.0.0.1', '-p', env.APP_PORT], { NODE_ENV: 'production', EXCURSION_BENCH: '1' }, true);
    await waitForHttp(`${env.NEXTAUTH_URL}/api/health`);
    const benchEnv = { ...env, TEST_BASE_URL: env.NEXTAUTH_URL, TEST_DATA_DIR: dataDir, EXCURSION_BENCH: '1' };
    let code = 0;
    for (const f of files) {
      log(`benchmark ${f}…`);
      const r = spawnSync(tsx, ts(f, ...flags), { cwd: root, env: benchEnv, stdio: 'inherit' });
      if (r.status !== 0) code = r.status ?? 1;
    }
    return shutdown(code);
  }

  // start
  buildIfStale();
  await startSideServices();
  simulateDemo();
  spawnChild('next start', nextBin, ['start', '-H', '127.0.0.1', '-p', env.APP_PORT], { NODE_ENV: 'production' });
  await waitForHttp(`${env.NEXTAUTH_URL}/api/health`);
  printWelcome();
  startReminderTimer();
}

main().catch((e) => {
  console.error(e);
  shutdown(1);
});
