// Types for scripts/mariadb.mjs (imported by the resilience tests).
import type { ChildProcess } from 'node:child_process';

export function which(bin: string): string | null;
export function dbPaths(dataDir: string): { dataDir: string; dbDir: string; socket: string; pidFile: string; log: string };
export function initDataDir(dataDir: string): boolean;
export function mariadbdArgs(dataDir: string, port: string | number): string[];
export function pingDb(dataDir: string): boolean;
export function serverPid(dataDir: string): number | null;
export function startDb(dataDir: string, port: string | number, opts?: { onExit?: (code: number | null) => void; timeoutMs?: number; cwd?: string }): Promise<ChildProcess>;
export function stopDb(dataDir: string, timeoutMs?: number): Promise<void>;
export function killDb(dataDir: string, timeoutMs?: number): Promise<number>;
