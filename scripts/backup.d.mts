// Types for scripts/backup.mjs (imported by the resilience tests).
export const MANIFEST: string;
export const DUMP: string;
export const FORMAT: string;
export type Manifest = { format: string; createdAt: string; database: string; files: { path: string; bytes: number; sha256: string }[] };
export function stamp(d?: Date): string;
export function listFiles(dir: string): string[];
export function hashTree(dir: string): Record<string, string>;
export function createBackup(a: { socket: string; database: string; objectsDir: string; outRoot: string; suffix?: string }): string;
export function verifyBackup(dir: string): Manifest;
export function loadDump(a: { socket: string; database: string; dir: string }): void;
export function restoreObjects(a: { dir: string; objectsDir: string }): number;
