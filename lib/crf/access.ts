import type { Role } from '@/lib/roles';
import type { FormAccess } from './definitions';

/** Roles that never see allocation or arm-revealing data in a study: the assessor always, plus those the study names. */
export function blindedRoles(studyConfig: Record<string, unknown> | null | undefined): Role[] {
  const extra = Array.isArray(studyConfig?.blindedRoles) ? (studyConfig!.blindedRoles as Role[]) : [];
  return [...new Set<Role>(['assessor', ...extra])];
}

/** True when every role the person acts in here is blinded (a person holding any unblinded role is not). */
export function isBlinded(roles: readonly Role[], studyConfig: Record<string, unknown> | null | undefined): boolean {
  const b = blindedRoles(studyConfig);
  return roles.length > 0 && roles.every((r) => b.includes(r));
}

/** Who may enter or change records of a form, by its access class. */
export function writeRoles(access: FormAccess): Role[] {
  switch (access) {
    case 'assessor':
      return ['assessor'];
    case 'unblinded':
      return ['therapist', 'coordinator'];
    default:
      return ['coordinator', 'investigator'];
  }
}

/** Who may read records of a form; unblinded-only forms are never readable by blinded roles. */
export function readRoles(access: FormAccess, studyConfig: Record<string, unknown> | null | undefined): Role[] {
  const all: Role[] = ['coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'data_manager'];
  if (access === 'unblinded') return all.filter((r) => !blindedRoles(studyConfig).includes(r));
  return all;
}

export const REASON_CODES = {
  transcription_error: 'Transcription error',
  late_information: 'Late information',
  query_response: 'Response to a data query',
  source_corrected: 'Source document corrected',
  other: 'Other',
} as const;
export type ReasonCode = keyof typeof REASON_CODES;
