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

export const crfSaveBody = z.strictObject({
  data: z.record(z.string(), z.unknown()),
  intent: z.enum(['draft', 'submit'], 'Say whether this is a draft or a submission.'),
  baseVersion: z.number().int().positive().nullable(),
  reason: z
    .strictObject({
      code: z.enum(['transcription_error', 'late_information', 'query_response', 'source_corrected', 'other'], 'Choose a reason from the list.'),
      text: z.string().trim().max(500).optional(),
    })
    .optional(),
});
export const crfVoidBody = z.strictObject({ reason, baseVersion: z.number().int().positive() });

export const screeningCreateBody = z.strictObject({
  screeningNumber: z.string().trim().regex(/^[A-Za-z0-9-]{1,40}$/, 'Use letters, digits and hyphens (at most 40).'),
  screeningDate: z.iso.date('Enter the date as YYYY-MM-DD.'),
  age: z.number().int().min(0).max(120),
  sex: z.enum(['M', 'F', 'U'], 'Choose M, F or U (unknown).'),
});
export const screeningOutcomeBody = z.strictObject({ outcome: z.enum(['declined', 'other'], 'Choose declined or other; eligibility comes from the eligibility form.'), reason });
export const randomiseBody = z.strictObject({ confirm: z.literal(true, 'Confirm that eligibility and consent are as shown.') });
export const unblindBody = z.strictObject({ reason: z.string().trim().min(10, 'Describe the clinical reason (at least 10 characters).').max(1000) });

const pointer = z.string().max(500).regex(/^(\/[^/]*)*$/, 'Give the item as a JSON Pointer, e.g. /weight_kg.');
export const queryOpenBody = z.strictObject({ recordId: z.number().int().positive(), itemPath: pointer, message: z.string().trim().min(5, 'Say what needs checking (at least 5 characters).').max(2000) });
export const queryTextBody = z.strictObject({ text: z.string().trim().min(2, 'Write a short answer.').max(2000) });
export const queryCloseBody = z.strictObject({ text: z.string().trim().max(2000).optional() });
export const verifyBody = z.strictObject({ recordId: z.number().int().positive(), itemPath: z.union([z.literal(''), pointer]) });
export const saeFollowUpBody = z.strictObject({ note: z.string().trim().min(5, 'Say what was done (at least 5 characters).').max(2000) });
export const signBody = z.strictObject({ password: z.string().min(1, 'Re-enter your password to sign.').max(200), confirm: z.literal(true, 'Confirm the statement to sign.') });

// Sample-size planning (lib/report/sample-size.ts): the ranges a planning calculation can sensibly use.
const planAlpha = z.number().gt(0, 'The significance level alpha must be greater than 0.').max(0.5, 'The significance level alpha must be at most 0.5 (0.05 is usual).').optional();
const planPower = z.number().min(0.5, 'The power must be at least 0.5 (0.8 or 0.9 is usual).').lt(1, 'The power must be below 1 (100 % power needs infinitely many participants).').optional();
const planAlternative = z.enum(['two-sided', 'one-sided'], 'Choose two-sided or one-sided.').optional();
const planDropout = z.number().min(0, 'The expected loss to follow-up cannot be negative.').max(0.8, 'The expected loss to follow-up must be at most 0.8 (80 %).').optional();
const planProportion = (name: string) => z.number().gt(0, `${name} must be greater than 0.`).lt(1, `${name} must be less than 1.`);
export const sampleSizeBody = z.discriminatedUnion(
  'kind',
  [
    z.strictObject({
      kind: z.literal('two_means'),
      delta: z.number().refine((v) => v !== 0, 'The difference to detect (delta) must not be 0.'),
      sd: z.number().gt(0, 'The standard deviation (sd) must be greater than 0.'),
      alpha: planAlpha,
      power: planPower,
      alternative: planAlternative,
      dropout: planDropout,
    }),
    z
      .strictObject({
        kind: z.literal('two_proportions'),
        p1: planProportion('The proportion p1'),
        p2: planProportion('The proportion p2'),
        alpha: planAlpha,
        power: planPower,
        alternative: planAlternative,
        dropout: planDropout,
      })
      .refine((b) => b.p1 !== b.p2, { message: 'The proportions p1 and p2 must differ.', path: ['p2'] }),
  ],
  'Choose the kind of calculation: two_means or two_proportions.',
);
export type SampleSizeBody = z.infer<typeof sampleSizeBody>;
// Database lock (lib/lock).
export const lockBody = z.strictObject({
  level: z.enum(['soft', 'hard'], 'Choose soft or hard.'),
  siteCode: siteCode.optional(),
  override: z.boolean().optional(),
  reason: z.string().trim().max(500).optional(),
});
export const unlockRequestBody = z.strictObject({ siteCode: siteCode.optional(), reason });
export const unlockApproveBody = z.strictObject({});
export const exportQuery = z.strictObject({
  format: z.enum(['xlsx', 'csv', 'odm'], 'Choose the format xlsx, csv or odm.'),
  profile: z.enum(['full', 'deidentified'], 'Choose the profile full or deidentified.').default('full'),
});
