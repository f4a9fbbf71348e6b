// Database faults with the server running: three loops save CRF drafts through the real API while MariaDB is killed
// (SIGKILL, as a crash would) and started again the way the bootstrap starts it. During the outage every answer is
// 503 db_unavailable (never a 500); after the restart the app answers /api/health and saves again within 10 s by
// itself; and nothing is half-written: each record's version equals the number of saves that left audit rows, its
// values equal the audit trail replayed, every acknowledged save is in the trail, and the hash chain verifies.
import { describe, it, expect, beforeAll, afterAll } from 'vitest';
import { BASE, Client, DEMO, signedIn, type JsonResponse } from '../support/http';
import { privDb, rows } from '../support/db';
import { demoStudy, siteOf, uniq } from '../support/factories';
import { coordinatorOf, example } from '../support/ready';
import { recordScreening } from '@/lib/screening';
import { verifyAuditChain } from '@/lib/audit';
import { killDb, pingDb, serverPid, startDb } from '../../scripts/mariadb.mjs';

const dataDir = process.env.TEST_DATA_DIR!;
const dbPort = process.env.DB_PORT!;
const MESSAGE = 'The database is not reachable at the moment. Nothing was saved; try again in a few seconds.';
const LOOPS = 3;

type Attempt = { loop: number; sentAt: number; doneAt: number; status: number; code?: string; message?: string; requestId: string | null; version?: number };

let coord: Client;
let participants: number[] = [];
let hangParticipants: number[] = [];
const base = example('baseline');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const url = (p: number) => `/api/studies/TEMPO-FT/sites/HHC/participants/${p}/forms/baseline`;

beforeAll(async () => {
  const study = await demoStudy();
  const hhc = await siteOf(study.id, 'HHC');
  const c = await coordinatorOf('HHC');
  for (let i = 0; i < LOOPS; i++) {
    hangParticipants.push((await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('HNG'), screeningDate: '2026-11-20', age: 50 + i, sex: 'M', actor: { userId: c.id, role: 'coordinator' } })).id);
    participants.push((await recordScreening({ studyId: study.id, siteId: hhc.id, screeningNumber: uniq('FLT'), screeningDate: '2026-11-20', age: 30 + i, sex: 'F', actor: { userId: c.id, role: 'coordinator' } })).id);
  }
  coord = await signedIn(DEMO.coordinatorHHC);
});

afterAll(async () => {
  // Whatever happened above, later test files need their database back.
  const pid = serverPid(dataDir);
  if (pid) {
    try {
      process.kill(pid, 'SIGCONT');
    } catch {}
  }
  if (!pingDb(dataDir)) await startDb(dataDir, dbPort);
});

async function health(): Promise<{ status: number; code?: string }> {
  try {
    const r = await fetch(`${BASE}/api/health`);
    const b = (await r.json().catch(() => ({}))) as { error?: { code: string } };
    return { status: r.status, code: b.error?.code };
  } catch {
    return { status: 0 };
  }
}

/** Save loops, one per participant, each saving its baseline draft again and again with a changing age. */
function startLoops(list: number[]) {
  const attempts: Attempt[] = [];
  let stop = false;
  const loop = async (i: number) => {
    let version: number | null = (await coord.get(url(list[i]))).body?.record?.lockVersion ?? null;
    let age = 20;
    while (!stop) {
      age = age >= 90 ? 20 : age + 1;
      const sentAt = Date.now();
      const r: JsonResponse = await coord.json('PUT', url(list[i]), { data: { ...base, AGE: age }, intent: 'draft', baseVersion: version });
      const a: Attempt = { loop: i, sentAt, doneAt: Date.now(), status: r.status, code: r.body?.error?.code, message: r.body?.error?.message, requestId: r.headers.get('x-request-id') ?? r.body?.error?.requestId ?? null };
      if (r.status === 200) version = a.version = r.body.lockVersion;
      else if (r.status === 409) {
        // The save before committed but its answer was lost with the connection: read where the record is now.
        const cur = await coord.get(url(list[i]));
        if (cur.status === 200) version = cur.body.record?.lockVersion ?? null;
      } else await sleep(100);
      attempts.push(a);
    }
  };
  const running = list.map((_, i) => loop(i));
  return {
    attempts,
    okCount: (from = 0) => attempts.filter((a) => a.status === 200 && a.sentAt >= from).length,
    stop: async () => {
      stop = true;
      await Promise.all(running);
    },
  };
}

/** Never a 500 or any other surprise: 200, 409 after a lost answer, or 503 db_unavailable with the clear message. */
function unexpectedAnswers(attempts: Attempt[]) {
  return attempts.filter((a) => ![200, 409, 503].includes(a.status) || (a.status === 503 && (a.code !== 'db_unavailable' || a.message !== MESSAGE)));
}

/** No partial writes: versions, audit rows, acknowledged saves and values agree record by record; the chain verifies. */
async function checkNoPartialWrites(list: number[], attempts: Attempt[]) {
  const db = privDb();
  let lostAcks = 0;
  for (let i = 0; i < list.length; i++) {
    const [rec] = await rows<{ id: number; lock_version: number; data: string | Record<string, unknown> }>(db, "SELECT id, lock_version, data FROM crf_records WHERE participant_id = ? AND form_key = 'baseline'", [list[i]]);
    expect(rec).toBeTruthy();
    const audit = await rows<{ id: number; action: string; item_path: string | null; new_value: string | null; request_id: string | null }>(
      db, "SELECT id, action, item_path, new_value, request_id FROM audit_events WHERE entity_type = 'crf_record' AND entity_id = ? ORDER BY id", [String(rec.id)],
    );
    const saves = new Set(audit.map((a) => a.request_id));
    // Every version of the record has its audit rows, and every audited save made a version.
    expect(saves.size).toBe(Number(rec.lock_version));
    // Every save the client was told succeeded is in the trail, and no version it was told is beyond the record's.
    const acked = attempts.filter((a) => a.loop === i && a.status === 200);
    for (const a of acked) expect(saves.has(a.requestId), `acknowledged save ${a.requestId}`).toBe(true);
    expect(Math.max(...acked.map((a) => a.version!))).toBeLessThanOrEqual(Number(rec.lock_version));
    // A 503 wrote nothing, except a save whose commit reached the disk just before its answer was lost.
    const refused = attempts.filter((a) => a.loop === i && a.status === 503 && saves.has(a.requestId));
    expect(refused.length).toBeLessThanOrEqual(1);
    lostAcks += refused.length;
    // The record's value is what the audit trail says it is.
    const data = typeof rec.data === 'string' ? JSON.parse(rec.data) : rec.data;
    const lastAge = audit.filter((a) => a.action === 'item' && a.item_path === '/AGE').at(-1);
    expect(JSON.parse(lastAge!.new_value!)).toBe(data.AGE);
  }
  expect(await verifyAuditChain(db)).toMatchObject({ ok: true });
  return lostAcks;
}

describe('MariaDB killed and restarted under load', () => {
  it('answers 503 during the outage, recovers by itself within 10 s, and leaves no partial write', async () => {
    const { attempts, okCount, stop } = startLoops(participants);

    let restartedAt = 0;
    let restartCalledAt = 0;
    let killedAt = 0;
    let healthBackAt = 0;
    let saveBackAt = 0;
    const outageHealth: { status: number; code?: string }[] = [];
    try {
      while (okCount() < 5 * LOOPS) await sleep(50);
      killedAt = Date.now();
      await killDb(dataDir);
      // A few seconds without a database, with the loops still saving and the health check polled.
      const outageUntil = Date.now() + 4000;
      while (Date.now() < outageUntil) {
        outageHealth.push(await health());
        await sleep(250);
      }
      restartCalledAt = Date.now();
      await startDb(dataDir, dbPort);
      restartedAt = Date.now();
      while (Date.now() - restartedAt < 20_000 && (!healthBackAt || !saveBackAt)) {
        if (!healthBackAt && (await health()).status === 200) healthBackAt = Date.now();
        if (!saveBackAt) saveBackAt = attempts.find((a) => a.status === 200 && a.sentAt >= restartedAt)?.doneAt ?? 0;
        await sleep(200);
      }
      const resumedAt = Date.now();
      while (Date.now() - resumedAt < 15_000 && okCount(resumedAt) < 3 * LOOPS) await sleep(100);
    } finally {
      await stop();
      if (!pingDb(dataDir)) await startDb(dataDir, dbPort);
    }

    // Never a 500 (or anything else unexpected), before, during or after.
    expect(unexpectedAnswers(attempts)).toEqual([]);
    // While the server was down (from the kill until the restart began), every save answered 503 with the clear
    // message; so did the health check.
    const during = attempts.filter((a) => a.sentAt > killedAt + 200 && a.doneAt < restartCalledAt);
    expect(during.length).toBeGreaterThanOrEqual(LOOPS * 3);
    for (const a of during) {
      expect(a.status).toBe(503);
      expect(a.code).toBe('db_unavailable');
      expect(a.message).toBe(MESSAGE);
    }
    expect(outageHealth.length).toBeGreaterThan(5);
    expect(outageHealth.every((h) => h.status === 503 && h.code === 'db_unavailable')).toBe(true);
    // Recovery without help: health and a real save within 10 s of MariaDB answering again.
    expect(healthBackAt, 'health answered again').toBeGreaterThan(0);
    expect(saveBackAt, 'a save succeeded again').toBeGreaterThan(0);
    expect(healthBackAt - restartedAt).toBeLessThanOrEqual(10_000);
    expect(saveBackAt - restartedAt).toBeLessThanOrEqual(10_000);
    expect(okCount(restartedAt)).toBeGreaterThanOrEqual(3 * LOOPS);
    console.log(`[db-fault] ${attempts.length} saves: ${okCount()} ok, ${attempts.filter((a) => a.status === 503).length} answered 503; health back after ${healthBackAt - restartedAt} ms, first save after ${saveBackAt - restartedAt} ms`);

    const lostAcks = await checkNoPartialWrites(participants, attempts);
    console.log(`[db-fault] saves committed whose answer was lost in the crash: ${lostAcks}`);
  }, 120_000);
});

describe('MariaDB frozen (SIGSTOP) longer than the socket timeout, then resumed', () => {
  it('answers 503 (never 500) for saves caught in the freeze, and carries on alone when it resumes', async () => {
    const { attempts, okCount, stop } = startLoops(hangParticipants);
    const pid = serverPid(dataDir)!;
    let frozenAt = 0;
    let resumedAt = 0;
    try {
      while (okCount() < 3 * LOOPS) await sleep(50);
      frozenAt = Date.now();
      process.kill(pid, 'SIGSTOP');
      // Longer than the driver's 20 s socket timeout, so saves in flight meet it.
      await sleep(23_000);
    } finally {
      process.kill(pid, 'SIGCONT');
      resumedAt = Date.now();
    }
    try {
      while (Date.now() - resumedAt < 20_000 && okCount(resumedAt) < 3 * LOOPS) await sleep(100);
    } finally {
      await stop();
    }
    expect(unexpectedAnswers(attempts)).toEqual([]);
    // Saves in flight when the server froze waited out the socket timeout and were answered 503.
    const caught = attempts.filter((a) => a.sentAt < resumedAt && a.doneAt > frozenAt);
    expect(caught.filter((a) => a.status === 503 && a.sentAt <= frozenAt).length, 'saves caught in the freeze answered 503').toBeGreaterThan(0);
    const firstOk = attempts.find((a) => a.status === 200 && a.sentAt >= resumedAt);
    expect(firstOk, 'a save succeeded after the resume').toBeTruthy();
    expect(firstOk!.doneAt - resumedAt).toBeLessThanOrEqual(10_000);
    expect((await health()).status).toBe(200);
    console.log(`[db-fault] freeze: ${caught.length} saves caught (${caught.filter((a) => a.status === 503).length} answered 503), first save after resume in ${firstOk!.doneAt - resumedAt} ms`);
    await checkNoPartialWrites(hangParticipants, attempts);
  }, 120_000);
});
