// A snapshot killed half-way (the process dies while its files are being stored) lists nothing: the `snapshots` row
// is written only after every file and the manifest are stored. The half-written files stay unlisted in storage.
import { describe, it, expect } from 'vitest';
import { spawn } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import path from 'node:path';
import { Snapshot } from '@/models';
import { listSnapshots } from '@/lib/snapshot';
import { setLock } from '@/lib/lock';
import { lockStudy, randomised } from '../lock/helpers';

const objects = path.join(process.env.TEST_DATA_DIR ?? '.data-test', 'objects', process.env.S3_BUCKET ?? 'excursion');

describe('interrupted snapshot', () => {
  it('a snapshot process killed while storing its files leaves no listed snapshot', async () => {
    const { study, sites, users } = await lockStudy('KILL');
    for (let i = 0; i < 4; i++) await randomised(study, sites.AAA, users.coordinator.user.id);
    const dm = { userId: users.dm1.user.id, role: 'data_manager' as const };
    await setLock({ studyId: study.id, siteId: null, level: 'soft', actor: dm });
    await setLock({ studyId: study.id, siteId: null, level: 'hard', override: true, reason: 'interrupted snapshot check', actor: dm });
    const before = await Snapshot.count({ where: { studyId: study.id } });
    expect(before).toBe(1);
    const dir = path.join(objects, 'snapshots', String(study.id));
    const known = new Set(readdirSync(dir));

    const tsx = path.resolve('node_modules/.bin/tsx');
    const child = spawn(tsx, ['--conditions=react-server', 'tests/support/snapshot-child.ts', String(study.id), String(users.dm1.user.id)], { env: process.env, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    child.stdout.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (out += d));
    // Kill it as soon as the first file of its new snapshot is in storage, before the manifest.
    let prefix: string | null = null;
    const until = Date.now() + 60_000;
    while (Date.now() < until && child.exitCode === null) {
      const fresh = readdirSync(dir).find((d) => !known.has(d));
      if (fresh && readdirSync(path.join(dir, fresh)).some((f) => f.endsWith('._S3rver_object'))) {
        prefix = fresh;
        child.kill('SIGKILL');
        break;
      }
      await new Promise((r) => setTimeout(r, 2));
    }
    await new Promise((r) => (child.exitCode !== null || child.signalCode ? r(null) : child.once('exit', r)));
    expect(prefix, `the child finished before it could be interrupted: ${out}`).not.toBeNull();
    expect(child.signalCode).toBe('SIGKILL');
    // Some files made it to storage, the manifest did not, and no row lists the snapshot.
    expect(existsSync(path.join(dir, prefix!, 'manifest.json._S3rver_object'))).toBe(false);
    expect(await Snapshot.count({ where: { studyId: study.id } })).toBe(before);
    const listed = await listSnapshots(study.id);
    expect(listed).toHaveLength(1);
    expect(listed.some((s) => s.storagePrefix.endsWith(prefix!))).toBe(false);
  }, 120_000);
});
