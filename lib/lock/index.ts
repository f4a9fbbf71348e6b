import 'server-only';
import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Allocation, CrfRecord, LockEvent, LockState, Participant, Query, SaeReport, Signature, Site, Study, UnlockRequest, User, Verification, Visit, sequelize } from '@/models';
import { AppError } from '@/lib/errors';
import { logger } from '@/lib/log';
import { appendAudit } from '@/lib/audit';
import type { Role } from '@/lib/roles';

/**
 * Database lock of a study and of its sites.
 *
 * - `open`: everything as usual.
 * - `soft`: no new data entry (CRF records, screening, randomisation, uploads, verification, signatures, opening or
 *   re-opening data queries); outstanding data queries may still be answered and closed, and study administration
 *   (memberships, invitations, sites, emergency unblinding) goes on.
 * - `hard`: no writes at all, except the lock routes themselves.
 *
 * A study-level lock covers every site; the effective level of a site is the stricter of its own and the study's.
 * A hard lock needs a soft lock first (the soft period is when the last queries are answered and closed) and a clean
 * readiness check, or the blockers acknowledged with `override: true` and a reason. Unlocking lowers a lock by one
 * level (hard → soft, soft → open): one data manager asks, a different data manager approves.
 */

export type LockLevel = 'open' | 'soft' | 'hard';
/** What a write is, for the lock: data entry, data-query resolution, or administration (and safety actions). */
export type WriteKind = 'entry' | 'query' | 'admin';
type Actor = { userId: number; role: Role | string; requestId?: string };

const RANK: Record<LockLevel, number> = { open: 0, soft: 1, hard: 2 };
const stricter = (a: LockLevel, b: LockLevel): LockLevel => (RANK[a] >= RANK[b] ? a : b);

/** Whether a write of this kind is refused at this level. */
export function refuses(level: LockLevel, kind: WriteKind): boolean {
  if (level === 'hard') return true;
  return level === 'soft' && kind === 'entry';
}

export type EffectiveLock = {
  /** The stricter of the study's and the site's own level. */
  level: LockLevel;
  /** Which lock decides the level (null when open). */
  scope: 'study' | 'site' | null;
  /** When the deciding lock was set. */
  since: string | null;
  study: { level: LockLevel; since: string | null };
  site: { level: LockLevel; since: string | null } | null;
};

type LockRow = { siteId: number | null; level: LockLevel; since: Date };

/**
 * The study's own lock row and the site's (when a site is given). Plain SQL: every write checks it (twice, in the
 * route gate and again in its transaction), so it is kept to one cheap statement.
 */
async function rowsOf(studyId: number, siteId: number | null | undefined, t?: Transaction): Promise<LockRow[]> {
  // A locking read sees the latest committed rows whatever snapshot the transaction already holds.
  const rows = await sequelize.query<{ site_id: number | null; level: LockLevel; since: string }>(
    `SELECT site_id, level, DATE_FORMAT(since, '%Y-%m-%dT%H:%i:%s.%fZ') AS since FROM lock_states
      WHERE study_id = ? AND ${siteId ? '(site_id IS NULL OR site_id = ?)' : 'site_id IS NULL'}${t ? ' LOCK IN SHARE MODE' : ''}`,
    { replacements: siteId ? [studyId, siteId] : [studyId], type: QueryTypes.SELECT, transaction: t },
  );
  return rows.map((r) => ({ siteId: r.site_id === null ? null : Number(r.site_id), level: r.level, since: new Date(r.since) }));
}

function effective(rows: LockRow[], siteId: number | null | undefined): EffectiveLock {
  const s = rows.find((r) => r.siteId === null);
  const own = siteId ? rows.find((r) => r.siteId === siteId) : undefined;
  const study = { level: (s?.level ?? 'open') as LockLevel, since: s && s.level !== 'open' ? s.since.toISOString() : null };
  const site = siteId ? { level: (own?.level ?? 'open') as LockLevel, since: own && own.level !== 'open' ? own.since.toISOString() : null } : null;
  const level = stricter(study.level, site?.level ?? 'open');
  const scope = level === 'open' ? null : RANK[study.level] >= RANK[site?.level ?? 'open'] ? 'study' : 'site';
  return { level, scope, since: scope === 'study' ? study.since : scope === 'site' ? site!.since : null, study, site };
}

/** The effective lock of a study, or of one of its sites (study-level lock included: the stricter wins). */
export async function lockState(studyId: number, siteId?: number | null, t?: Transaction): Promise<EffectiveLock> {
  return effective(await rowsOf(studyId, siteId, t), siteId);
}

/** True once the study itself is hard-locked: the dataset is frozen and by-arm results may be shown. */
export async function isLockedForAnalysis(studyId: number, t?: Transaction): Promise<boolean> {
  return (await lockState(studyId, null, t)).study.level === 'hard';
}

const fmt = (iso: string | null) => (iso ? `${iso.slice(0, 16).replace('T', ' ')} UTC` : 'now');

/**
 * Throws AppError('locked') (423) when the study or site lock refuses a write of this kind. Inside a transaction it
 * first takes a shared lock on the study row, which the lock functions take exclusively: a lock that lands while the
 * write is in flight waits for it, and a write that starts after a lock committed sees it. Call it before anything
 * else in the transaction (before appendAudit), so the lock order is always study row, then audit head.
 */
export async function assertWritable(studyId: number, siteId: number | null | undefined, kind: WriteKind, t?: Transaction): Promise<void> {
  if (t) await sequelize.query('SELECT id FROM studies WHERE id = ? LOCK IN SHARE MODE', { replacements: [studyId], type: QueryTypes.SELECT, transaction: t });
  const st = await lockState(studyId, siteId, t);
  if (!refuses(st.level, kind)) return;
  const study = await Study.findByPk(studyId, { attributes: ['code'], transaction: t });
  const site = st.scope === 'site' && siteId ? await Site.findByPk(siteId, { attributes: ['code'], transaction: t }) : null;
  const what = st.scope === 'site' ? `Site ${site?.code ?? siteId} of ${study?.code ?? studyId}` : `Study ${study?.code ?? studyId}`;
  const message =
    st.level === 'hard'
      ? `${what} is hard-locked since ${fmt(st.since)}: no changes are accepted. A data manager can ask for it to be unlocked.`
      : `${what} is soft-locked since ${fmt(st.since)}: no new data entry is accepted; open data queries can still be answered and closed.`;
  throw new AppError('locked', message, { details: { lock: { level: st.level, scope: st.scope, since: st.since, study: study?.code ?? null, site: site?.code ?? null } } });
}

/**
 * After a study's hard lock has committed: the immutable snapshot is taken (lib/snapshot), which verifies the
 * randomisation commitment and reveals the allocation for analysis. Outside the lock's transaction, so the lock never
 * waits for object storage; if the snapshot fails the lock stands and the data manager takes it again from the
 * snapshots page (POST /api/studies/:study/snapshots).
 */
export async function onStudyHardLocked(a: { studyId: number; actor: Actor }): Promise<{ id: number; snapshotHash: string; commitment: string } | { error: string }> {
  // Imported here: lib/snapshot itself asks lib/lock whether the study is locked.
  const { createSnapshot } = await import('@/lib/snapshot');
  try {
    const snap = await createSnapshot({ studyId: a.studyId, actor: { userId: a.actor.userId, role: 'data_manager', requestId: a.actor.requestId } });
    return { id: snap.id, snapshotHash: snap.snapshotHash, commitment: snap.commitment.status };
  } catch (e) {
    logger.error({ err: String(e), studyId: a.studyId }, 'snapshot after hard lock failed');
    return { error: e instanceof AppError ? e.message : 'The snapshot could not be written; the lock stands. Take it again from the snapshots page.' };
  }
}

// ---------------------------------------------------------------- readiness

export type BlockerKind = 'open_queries' | 'unsigned_casebooks' | 'unverified_forms' | 'sae_without_follow_up' | 'missing_visits';
export type ReadinessItem = { kind: BlockerKind; label: string; count: number; participants: string[]; detail?: Record<string, number> };

const LABELS: Record<BlockerKind, string> = {
  open_queries: 'Data queries not closed (open or answered)',
  unsigned_casebooks: 'Casebooks of randomised participants without a valid investigator signature',
  unverified_forms: 'Required forms not source-verified',
  sae_without_follow_up: 'Serious adverse events without follow-up',
  missing_visits: 'Required visits not done',
};

/** The forms that must be source-verified: `config.sdvForms` when the study sets it, else the forms of required visits. */
export function requiredSdvForms(config: Record<string, unknown>): string[] {
  if (Array.isArray(config.sdvForms)) return (config.sdvForms as unknown[]).filter((f): f is string => typeof f === 'string');
  const schedule = (config.schedule as { forms?: string[]; required?: boolean }[] | undefined) ?? [];
  return [...new Set(schedule.filter((v) => v.required).flatMap((v) => v.forms ?? []))];
}

/**
 * What stands in the way of a hard lock of the study (or one site): data queries not closed, randomised
 * participants without a valid casebook signature, submitted records of required forms (of randomised participants)
 * without a current whole-form verification, SAEs without follow-up, required visits not done. Each check gives a
 * count and the participants' codes; `blockers` holds the checks with a count above zero.
 */
export async function readinessCheck(studyId: number, siteId?: number | null, t?: Transaction) {
  const study = await Study.findByPk(studyId, { transaction: t });
  if (!study) throw new AppError('not_found', 'The study was not found.');
  const scope: Record<string, unknown> = { studyId, ...(siteId ? { siteId } : {}) };
  const [queries, allocations, saes, visits] = await Promise.all([
    Query.findAll({ where: { ...scope, state: { [Op.in]: ['open', 'answered'] } }, attributes: ['participantId', 'state'], transaction: t }),
    Allocation.findAll({ where: scope, attributes: ['participantId'], transaction: t }),
    SaeReport.findAll({ where: { ...scope, followedUpAt: { [Op.is]: null } }, attributes: ['participantId'], transaction: t }),
    Visit.findAll({ where: { ...scope, required: true, completedOn: { [Op.is]: null } }, attributes: ['participantId', 'visitKey'], transaction: t }),
  ]);
  const randomised = allocations.map((a) => a.participantId);
  const ids = randomised.length ? randomised : [0];
  const signed = await Signature.findAll({ where: { participantId: { [Op.in]: ids }, status: 'valid' }, attributes: ['participantId'], transaction: t });
  const signedSet = new Set(signed.map((s) => s.participantId));
  const unsigned = randomised.filter((p) => !signedSet.has(p));
  const sdvForms = requiredSdvForms(study.config);
  const records = await CrfRecord.findAll({ where: { ...scope, participantId: { [Op.in]: ids }, status: 'submitted', formKey: { [Op.in]: sdvForms.length ? sdvForms : [''] } }, attributes: ['id', 'participantId', 'formKey'], transaction: t });
  const verified = await Verification.findAll({ where: { recordId: { [Op.in]: records.map((r) => r.id).concat(0) }, itemPath: '', clearedAt: { [Op.is]: null } }, attributes: ['recordId'], transaction: t });
  const verifiedSet = new Set(verified.map((v) => v.recordId));
  const unverified = records.filter((r) => !verifiedSet.has(r.id));

  const all = [...queries, ...unverified, ...saes, ...visits].map((x) => x.participantId).concat(unsigned);
  const ps = await Participant.findAll({ where: { id: { [Op.in]: all.concat(0) } }, attributes: ['id', 'subjectCode', 'screeningNumber'], transaction: t });
  const code = new Map(ps.map((p) => [p.id, p.subjectCode ?? p.screeningNumber]));
  const codes = (pids: number[]) => [...new Set(pids.map((p) => code.get(p) ?? String(p)))].sort();
  const tally = (keys: string[]) => keys.reduce<Record<string, number>>((m, k) => ((m[k] = (m[k] ?? 0) + 1), m), {});

  const checks: ReadinessItem[] = [
    { kind: 'open_queries', label: LABELS.open_queries, count: queries.length, participants: codes(queries.map((q) => q.participantId)), detail: { open: queries.filter((q) => q.state === 'open').length, answered: queries.filter((q) => q.state === 'answered').length } },
    { kind: 'unsigned_casebooks', label: LABELS.unsigned_casebooks, count: unsigned.length, participants: codes(unsigned) },
    { kind: 'unverified_forms', label: LABELS.unverified_forms, count: unverified.length, participants: codes(unverified.map((r) => r.participantId)), detail: tally(unverified.map((r) => r.formKey)) },
    { kind: 'sae_without_follow_up', label: LABELS.sae_without_follow_up, count: saes.length, participants: codes(saes.map((s) => s.participantId)) },
    { kind: 'missing_visits', label: LABELS.missing_visits, count: visits.length, participants: codes(visits.map((v) => v.participantId)), detail: tally(visits.map((v) => v.visitKey)) },
  ];
  const blockers = checks.filter((c) => c.count > 0);
  return { clean: blockers.length === 0, checks, blockers, sdvForms };
}

// ---------------------------------------------------------------- lock and unlock

function mustBeDataManager(actor: Actor) {
  if (actor.role !== 'data_manager') throw new AppError('forbidden', 'Only data managers lock and unlock the database.');
}

async function lockStudyRow(studyId: number, t: Transaction) {
  const study = await Study.findByPk(studyId, { transaction: t, lock: t.LOCK.UPDATE });
  if (!study) throw new AppError('not_found', 'The study was not found.');
  return study;
}

async function siteIn(studyId: number, siteId: number | null, t: Transaction) {
  if (siteId === null) return null;
  const site = await Site.findOne({ where: { id: siteId, studyId }, transaction: t });
  if (!site) throw new AppError('not_found', 'The site was not found in this study.');
  return site;
}

async function setRow(t: Transaction, studyId: number, siteId: number | null, level: LockLevel, userId: number, now: Date) {
  const row = await LockState.findOne({ where: { studyId, siteId: siteId ?? { [Op.is]: null } } as never, transaction: t, lock: t.LOCK.UPDATE });
  if (row) await row.update({ level, since: now, changedBy: userId }, { transaction: t });
  else await LockState.create({ studyId, siteId, level, since: now, changedBy: userId }, { transaction: t });
}

const scopeName = (studyCode: string, site: Site | null) => (site ? `site ${site.code} of ${studyCode}` : `study ${studyCode}`);

/**
 * Locks the study (siteId null) or one site at `level`. Soft needs the scope open; hard needs it soft (effective
 * level, so a site under a soft study lock may be hard-locked) and a clean readiness check, or `override: true`
 * with a reason, in which case the blockers are kept in the history. A study-level hard lock then takes the snapshot
 * (onStudyHardLocked, after commit) and returns it.
 */
export async function setLock(a: { studyId: number; siteId: number | null; level: 'soft' | 'hard'; override?: boolean; reason?: string | null; actor: Actor }) {
  mustBeDataManager(a.actor);
  const reason = a.reason?.trim() || null;
  const result = await sequelize.transaction(async (t) => {
    const study = await lockStudyRow(a.studyId, t);
    const site = await siteIn(a.studyId, a.siteId, t);
    const st = await lockState(a.studyId, a.siteId, t);
    const own = site ? st.site!.level : st.study.level;
    const name = scopeName(study.code, site);
    if (a.level === 'soft' && st.level !== 'open') {
      throw new AppError('conflict', `The ${name} is already ${st.level}-locked${st.scope === 'study' && site ? ' by the study lock' : ''}.`);
    }
    let blockers: unknown[] | null = null;
    if (a.level === 'hard') {
      if (st.level === 'open') throw new AppError('conflict', `Soft-lock the ${name} first: the soft lock is when the last data queries are answered and closed.`);
      if (st.level === 'hard') throw new AppError('conflict', `The ${name} is already hard-locked${st.scope === 'study' && site ? ' by the study lock' : ''}.`);
      const ready = await readinessCheck(a.studyId, a.siteId, t);
      if (!ready.clean) {
        if (!a.override) {
          throw new AppError('conflict', `The ${name} is not ready for a hard lock: ${ready.blockers.map((b) => `${b.count} × ${b.label.toLowerCase()}`).join('; ')}. Resolve them, or acknowledge them with override and a reason.`, { details: { blockers: ready.blockers } });
        }
        if (!reason || reason.length < 3) throw new AppError('validation_failed', 'Give the reason for locking despite the blockers.', { fields: { reason: 'Give a reason of at least 3 characters.' } });
        blockers = ready.blockers;
      }
    }
    const now = new Date();
    await setRow(t, a.studyId, a.siteId, a.level, a.actor.userId, now);
    const ev = await LockEvent.create({ studyId: a.studyId, siteId: a.siteId, action: `${a.level}_lock`, fromLevel: own, toLevel: a.level, reason, overridden: blockers !== null, blockers, unlockRequestId: null, actorUserId: a.actor.userId, actorRole: String(a.actor.role), at: now }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: String(a.actor.role), studyId: a.studyId, siteId: a.siteId, entityType: site ? 'site_lock' : 'study_lock', entityId: site ? site.id : a.studyId, action: `${a.level}_lock`, itemPath: '/level', oldValue: own, newValue: a.level, reason: blockers ? `override: ${reason}` : reason, requestId: a.actor.requestId }]);
    return { eventId: ev.id, state: await lockState(a.studyId, a.siteId, t), studyHard: a.level === 'hard' && !site };
  });
  const { studyHard, ...out } = result;
  return studyHard ? { ...out, snapshot: await onStudyHardLocked({ studyId: a.studyId, actor: a.actor }) } : out;
}

/** Soft-locks the study or a site (no new data entry). */
export const softLock = (a: Omit<Parameters<typeof setLock>[0], 'level' | 'override'>) => setLock({ ...a, level: 'soft' });
/** Hard-locks the study or a site (no writes at all); see setLock for readiness and override. */
export const hardLock = (a: Omit<Parameters<typeof setLock>[0], 'level'>) => setLock({ ...a, level: 'hard' });

const presentRequest = (r: UnlockRequest, names: Map<number, string>, siteCodes: Map<number, string>) => ({
  id: r.id, site: r.siteId ? siteCodes.get(r.siteId) ?? null : null, fromLevel: r.fromLevel, toLevel: r.toLevel, reason: r.reason, status: r.status,
  requestedBy: names.get(r.requestedBy) ?? null, requestedByUserId: r.requestedBy, requestedAt: r.requestedAt.toISOString(),
  decidedBy: r.decidedBy ? names.get(r.decidedBy) ?? null : null, decidedAt: r.decidedAt?.toISOString() ?? null,
});

/** A data manager asks for the study's (or a site's) own lock to be lowered by one level; another must approve. */
export async function requestUnlock(a: { studyId: number; siteId: number | null; reason: string; actor: Actor }) {
  mustBeDataManager(a.actor);
  return sequelize.transaction(async (t) => {
    const study = await lockStudyRow(a.studyId, t);
    const site = await siteIn(a.studyId, a.siteId, t);
    const st = await lockState(a.studyId, a.siteId, t);
    const own = site ? st.site!.level : st.study.level;
    const name = scopeName(study.code, site);
    if (own === 'open') throw new AppError('conflict', st.level !== 'open' ? `The ${name} is locked by the study lock; ask for the study to be unlocked.` : `The ${name} is not locked.`);
    const pending = await UnlockRequest.findOne({ where: { studyId: a.studyId, siteId: a.siteId ?? { [Op.is]: null }, status: 'pending', fromLevel: own } as never, transaction: t });
    if (pending) throw new AppError('conflict', `An unlock request for the ${name} is already waiting for approval (request ${pending.id}).`, { details: { requestId: pending.id } });
    const now = new Date();
    const toLevel = own === 'hard' ? 'soft' : 'open';
    const r = await UnlockRequest.create({ studyId: a.studyId, siteId: a.siteId, fromLevel: own, toLevel, reason: a.reason, status: 'pending', requestedBy: a.actor.userId, requestedAt: now, decidedBy: null, decidedAt: null }, { transaction: t });
    await LockEvent.create({ studyId: a.studyId, siteId: a.siteId, action: 'unlock_request', fromLevel: own, toLevel, reason: a.reason, overridden: false, blockers: null, unlockRequestId: r.id, actorUserId: a.actor.userId, actorRole: String(a.actor.role), at: now }, { transaction: t });
    await appendAudit(t, [{ actorUserId: a.actor.userId, actorRole: String(a.actor.role), studyId: a.studyId, siteId: a.siteId, entityType: 'unlock_request', entityId: r.id, action: 'request', newValue: { fromLevel: own, toLevel, site: site?.code ?? null }, reason: a.reason, requestId: a.actor.requestId }]);
    const names = new Map([[a.actor.userId, (await User.findByPk(a.actor.userId, { transaction: t }))?.name ?? '']]);
    return presentRequest(r, names, new Map(site ? [[site.id, site.code]] : []));
  });
}

/**
 * A different data manager approves a pending unlock request: the lock goes down one level (hard → soft, soft → open).
 * The requester cannot approve their own request (403); a request whose lock changed since is refused (409).
 */
export async function approveUnlock(a: { studyId: number; requestId: number; actor: Actor }) {
  mustBeDataManager(a.actor);
  return sequelize.transaction(async (t) => {
    const study = await lockStudyRow(a.studyId, t);
    const r = await UnlockRequest.findOne({ where: { id: a.requestId, studyId: a.studyId }, transaction: t, lock: t.LOCK.UPDATE });
    if (!r) throw new AppError('not_found', 'The unlock request was not found in this study.');
    if (r.status !== 'pending') throw new AppError('conflict', `The unlock request was already ${r.status}.`);
    if (r.requestedBy === a.actor.userId) throw new AppError('forbidden', 'A different data manager must approve an unlock you asked for.');
    const site = await siteIn(a.studyId, r.siteId, t);
    const st = await lockState(a.studyId, r.siteId, t);
    const own = site ? st.site!.level : st.study.level;
    if (own !== r.fromLevel) throw new AppError('conflict', `The ${scopeName(study.code, site)} is ${own} now, not ${r.fromLevel} as when the unlock was asked for; ask again.`);
    const now = new Date();
    await setRow(t, a.studyId, r.siteId, r.toLevel, a.actor.userId, now);
    await r.update({ status: 'approved', decidedBy: a.actor.userId, decidedAt: now }, { transaction: t });
    await LockEvent.create({ studyId: a.studyId, siteId: r.siteId, action: 'unlock', fromLevel: r.fromLevel, toLevel: r.toLevel, reason: r.reason, overridden: false, blockers: null, unlockRequestId: r.id, actorUserId: a.actor.userId, actorRole: String(a.actor.role), at: now }, { transaction: t });
    await appendAudit(t, [
      { actorUserId: a.actor.userId, actorRole: String(a.actor.role), studyId: a.studyId, siteId: r.siteId, entityType: 'unlock_request', entityId: r.id, action: 'approve', itemPath: '/status', oldValue: 'pending', newValue: 'approved', reason: r.reason, requestId: a.actor.requestId },
      { actorUserId: a.actor.userId, actorRole: String(a.actor.role), studyId: a.studyId, siteId: r.siteId, entityType: site ? 'site_lock' : 'study_lock', entityId: site ? site.id : a.studyId, action: 'unlock', itemPath: '/level', oldValue: r.fromLevel, newValue: r.toLevel, reason: r.reason, requestId: a.actor.requestId },
    ]);
    const users = await User.findAll({ where: { id: { [Op.in]: [r.requestedBy, a.actor.userId] } }, attributes: ['id', 'name'], transaction: t });
    return { request: presentRequest(r, new Map(users.map((u) => [u.id, u.name])), new Map(site ? [[site.id, site.code]] : [])), state: await lockState(a.studyId, r.siteId, t) };
  });
}

/** The lock page's data: the study's and each site's level, pending and past unlock requests, the event history. */
export async function lockOverview(studyId: number) {
  const [rows, sites, requests, events] = await Promise.all([
    LockState.findAll({ where: { studyId } }),
    Site.findAll({ where: { studyId }, order: [['code', 'ASC']], attributes: ['id', 'code', 'name'] }),
    UnlockRequest.findAll({ where: { studyId }, order: [['id', 'DESC']], limit: 100 }),
    LockEvent.findAll({ where: { studyId }, order: [['id', 'DESC']], limit: 200 }),
  ]);
  const userIds = [...new Set([...requests.flatMap((r) => [r.requestedBy, r.decidedBy ?? 0]), ...events.map((e) => e.actorUserId)])];
  const users = await User.findAll({ where: { id: { [Op.in]: userIds.concat(0) } }, attributes: ['id', 'name'] });
  const names = new Map(users.map((u) => [u.id, u.name]));
  const siteCodes = new Map(sites.map((s) => [s.id, s.code]));
  const st = effective(rows, null);
  return {
    study: st.study,
    lockedForAnalysis: st.study.level === 'hard',
    sites: sites.map((s) => {
      const e = effective(rows, s.id);
      return { code: s.code, name: s.name, level: e.level, scope: e.scope, since: e.since, own: e.site!.level, ownSince: e.site!.since };
    }),
    pendingRequests: requests.filter((r) => r.status === 'pending').map((r) => presentRequest(r, names, siteCodes)),
    requests: requests.map((r) => presentRequest(r, names, siteCodes)),
    history: events.map((e) => ({
      id: e.id, site: e.siteId ? siteCodes.get(e.siteId) ?? null : null, action: e.action, fromLevel: e.fromLevel, toLevel: e.toLevel, reason: e.reason, overridden: e.overridden,
      blockers: e.blockers, unlockRequestId: e.unlockRequestId, by: names.get(e.actorUserId) ?? null, role: e.actorRole, at: e.at.toISOString(),
    })),
  };
}

/** The id of a site of the study from its code (undefined or null → the study itself), or 404. */
export async function lockScopeSite(studyId: number, siteCode: string | null | undefined): Promise<number | null> {
  if (!siteCode) return null;
  const site = await Site.findOne({ where: { studyId, code: siteCode }, attributes: ['id'] });
  if (!site) throw new AppError('not_found', `There is no site ${siteCode} in this study.`, { fields: { siteCode: 'Not a site of this study.' } });
  return site.id;
}
