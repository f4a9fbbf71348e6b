/** Roles a membership can grant; a user may hold different roles in different studies and sites. */
export const ROLES = ['admin', 'data_manager', 'coordinator', 'therapist', 'assessor', 'investigator', 'monitor', 'statistician'] as const;
export type Role = (typeof ROLES)[number];

/** Plain-language names shown in the interface. */
export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Administrator',
  data_manager: 'Data manager',
  coordinator: 'Site coordinator',
  therapist: 'Therapist',
  assessor: 'Blinded assessor',
  investigator: 'Investigator',
  monitor: 'Monitor',
  statistician: 'Statistician',
};

/** Roles that may only ever hold a membership for the whole study (no single site). */
export const STUDY_WIDE_ROLES: readonly Role[] = ['admin', 'data_manager', 'statistician'];

export function isRole(v: unknown): v is Role {
  return typeof v === 'string' && (ROLES as readonly string[]).includes(v);
}
