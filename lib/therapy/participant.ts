import 'server-only';
import { Allocation, CrfRecord, Visit } from '@/models';
import { AppError } from '@/lib/errors';
import { isBlinded } from '@/lib/crf/access';
import { postOpDay } from '@/lib/schedule';
import type { Role } from '@/lib/roles';
import { PROGRAMMES, adherence, type ExerciseKind } from './index';

/**
 * Prescribed against logged therapy sessions of one participant, per post-operative week, from the programme of
 * their arm. Unblinded readers only (the programme reveals the arm).
 */
export async function participantAdherence(a: { study: { id: number; config: Record<string, unknown> }; participantId: number; roles: Role[]; today: string; toDay?: number }) {
  if (isBlinded(a.roles, a.study.config)) throw new AppError('forbidden', 'Therapy adherence is kept from blinded roles.');
  const alloc = await Allocation.findOne({ where: { participantId: a.participantId, studyId: a.study.id } });
  if (!alloc) throw new AppError('conflict', 'The participant has not been randomised; there is no programme yet.');
  const key = (a.study.config.programmes as Record<string, string> | undefined)?.[alloc.arm];
  const programme = key ? PROGRAMMES[key] : undefined;
  if (!programme) throw new AppError('conflict', `The study configuration names no therapy programme for arm ${alloc.arm}.`);
  const visit = await Visit.findOne({ where: { participantId: a.participantId } });
  if (!visit) throw new AppError('conflict', 'The participant has no visit schedule (no date of repair).');
  const recs = await CrfRecord.findAll({ where: { participantId: a.participantId, formKey: 'therapy_session', status: 'submitted' } });
  const sessions = recs
    .filter((r) => typeof r.data.session_date === 'string')
    .map((r) => ({
      postOpDay: postOpDay(visit.day0, r.data.session_date as string),
      supervised: true,
      exercises: ((r.data.exercises ?? []) as { kind: ExerciseKind; repetitions?: number }[]).map((e) => ({ kind: e.kind, repetitions: e.repetitions ?? 0 })),
    }))
    .filter((s) => s.postOpDay >= 0);
  const toDay = a.toDay ?? Math.max(0, Math.min(postOpDay(visit.day0, a.today), 84));
  return { programme: { key: programme.key, label: programme.label }, day0: visit.day0, ...adherence(programme, sessions, 0, toDay) };
}
