// How Excursion starts, pings and stops its own MariaDB server on a data directory: shared by the bootstrap
// (scripts/run.mjs), the backup/restore commands and the resilience tests, so every start uses the same options.
// Node built-ins only (runs before dependencies are installed).
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import os from 'node:os';

const isRoot = typeof process.getuid === 'function' && process.getuid() === 0;

/** Finds a program on PATH (or the usual sbin folders); null when missing. */
export function which(bin) {
  for (const dir of [...(process.env.PATH ?? '').split(':'), '/usr/sbin', '/usr/bin', '/sbin']) {
    const p = path.join(dir, bin);
    if (dir && existsSync(p)) return p;
  }
  return null;
}

/** Socket, pid file, log and database directory of a data directory. */
export function dbPaths(dataDir) {
  return {
    dataDir,
    dbDir: path.join(dataDir, 'mysql'),
    socket: path.join(dataDir, 'mysqld.sock'),
    pidFile: path.join(dataDir, 'mysqld.pid'),
    log: path.join(dataDir, 'mariadb.log'),
  };
}

/** Creates the system tables on first use; root signs in only through the socket as the current OS user. */
export function initDataDir(dataDir) {
  const p = dbPaths(dataDir);
  if (existsSync(path.join(p.dbDir, 'mysql'))) return false;
  mkdirSync(p.dbDir, { recursive: true });
  const args = ['--no-defaults', `--datadir=${p.dbDir}`, '--auth-root-authentication-method=socket', `--auth-root-socket-user=${os.userInfo().username}`, '--skip-test-db'];
  if (isRoot) args.push('--user=root');
  const r = spawnSync(which('mariadb-install-db') ?? 'mariadb-install-db', args, { encoding: 'utf8', stdio: 'pipe' });
  if (r.status !== 0) throw new Error(`mariadb-install-db failed (${r.status}): ${r.stdout}${r.stderr}`);
  return true;
}

/** The mariadbd command line for a data directory and TCP port (127.0.0.1 only, UTC, utf8mb4). */
export function mariadbdArgs(dataDir, port) {
  const p = dbPaths(dataDir);
  const args = [
    '--no-defaults',
    `--datadir=${p.dbDir}`,
    `--socket=${p.socket}`,
    `--pid-file=${p.pidFile}`,
    `--log-error=${p.log}`,
    `--port=${port}`,
    '--bind-address=127.0.0.1',
    '--skip-name-resolve',
    '--character-set-server=utf8mb4',
    '--collation-server=utf8mb4_unicode_ci',
    '--default-time-zone=+00:00',
    '--innodb-buffer-pool-size=256M',
    '--max-connections=300',
    '--transaction-isolation=READ-COMMITTED',
  ];
  if (isRoot) args.push('--user=root');
  return args;
}

/** True when the server on this data directory answers on its socket. */
export function pingDb(dataDir) {
  const { socket } = dbPaths(dataDir);
  if (!existsSync(socket)) return false;
  const r = spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '-uroot', 'ping'], { encoding: 'utf8', stdio: 'pipe' });
  return r.status === 0;
}

/** The pid written by the running server, or null. */
export function serverPid(dataDir) {
  const { pidFile } = dbPaths(dataDir);
  if (!existsSync(pidFile)) return null;
  const n = Number.parseInt(readFileSync(pidFile, 'utf8').trim(), 10);
  return Number.isInteger(n) && n > 0 ? n : null;
}

/**
 * Starts mariadbd detached (it outlives the caller unless stopped) and resolves once it answers on its socket.
 * `onExit` hears about the process ending; `timeoutMs` bounds the wait.
 */
export async function startDb(dataDir, port, { onExit, timeoutMs = 60_000, cwd } = {}) {
  mkdirSync(dataDir, { recursive: true });
  const child = spawn(which('mariadbd') ?? 'mariadbd', mariadbdArgs(dataDir, port), { cwd, stdio: 'ignore', detached: true });
  let exited = false;
  child.on('exit', (code) => {
    exited = true;
    onExit?.(code);
  });
  child.unref();
  const until = Date.now() + timeoutMs;
  while (Date.now() < until) {
    if (pingDb(dataDir)) return child;
    if (exited) throw new Error(`MariaDB did not start; see ${dbPaths(dataDir).log}`);
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`MariaDB did not answer within ${timeoutMs / 1000} s; see ${dbPaths(dataDir).log}`);
}

/** Clean shutdown through the root socket; resolves when the server no longer answers and its pid is gone. */
export async function stopDb(dataDir, timeoutMs = 30_000) {
  const pid = serverPid(dataDir);
  if (pingDb(dataDir)) spawnSync('mariadb-admin', ['--no-defaults', `--socket=${dbPaths(dataDir).socket}`, '-uroot', 'shutdown'], { stdio: 'ignore' });
  const until = Date.now() + timeoutMs;
  while (Date.now() < until && (pingDb(dataDir) || (pid !== null && alive(pid)))) await new Promise((r) => setTimeout(r, 200));
}

/** Ends the server abruptly (SIGKILL), as a crash or power cut would; resolves when the process is gone. */
export async function killDb(dataDir, timeoutMs = 15_000) {
  const pid = serverPid(dataDir);
  if (pid === null) throw new Error(`no pid file in ${dataDir}`);
  process.kill(pid, 'SIGKILL');
  const until = Date.now() + timeoutMs;
  while (Date.now() < until && alive(pid)) await new Promise((r) => setTimeout(r, 100));
  return pid;
}

function alive(pid) {
  try {
    process.kill(pid, 0);
    return true;
  } catch {
    return false;
  }
}
