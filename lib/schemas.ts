import { z } from 'zod';
import { ROLES } from '@/lib/roles';

// One schema per API body, shared by the route handler and (where it has one) the form.
const reason = z.string().trim().min(3, 'Give a reason of at least 3 characters.').max(500);
const siteCode = z.string().regex(/^[A-Z0-9]{2,10}$/, 'Use 2–10 capital letters or digits.');

export const inviteBody = z.strictObject({
  email: z.string().trim().toLowerCase().max(254).pipe(z.email('Enter a valid e-mail address.')),
  name: z.string().trim().min(2, 'Enter the person’s name.').max(200),
  role: z.enum(ROLES, 'Choose one of the roles.'),
  site: siteCode.nullable().optional().transform((v) => v ?? null),
});
export const reasonBody = z.strictObject({ reason });
export const emptyBody = z.strictObject({});
export const membershipBody = z.strictObject({
  userId: z.number().int().positive(),
  role: z.enum(ROLES, 'Choose one of the roles.'),
  site: siteCode.nullable().optional().transform((v) => v ?? null),
});
export const siteCreateBody = z.strictObject({
  code: siteCode,
  name: z.string().trim().min(2).max(200),
  timeZone: z.string().min(1).max(64),
  recruitmentTarget: z.number().int().min(0).max(100_000),
  active: z.boolean().optional(),
});
export const siteUpdateBody = z.strictObject({
  name: z.string().trim().min(2).max(200).optional(),
  timeZone: z.string().min(1).max(64).optional(),
  recruitmentTarget: z.number().int().min(0).max(100_000).optional(),
  active: z.boolean().optional(),
  reason: reason.optional(),
});
export const acceptInvitationBody = z.strictObject({
  token: z.string().min(10).max(100),
  password: z.string().max(200),
});
