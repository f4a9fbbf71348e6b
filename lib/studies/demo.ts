/** The invented demo study TEMPO-FT (see the product brief); loaded by scripts/seed-demo.ts. */
export const DEMO_STUDY = {
  code: 'TEMPO-FT',
  title: 'TEMPO-FT: Timing of Early Motion after Flexor Tendon repair',
  status: 'recruiting' as const,
  config: {
    targetParticipants: 160,
    // Planned recruitment: linear from the first of October 2025 over 18 months to the target.
    recruitmentStart: '2025-10-01',
    recruitmentMonths: 18,
    // Serious adverse events are e-mailed to the site's investigators and to this address at once.
    safetyContact: 'safety@tempo-ft.example',
    arms: [
      { code: 'EPM', label: 'Early passive motion', ratio: 1 },
      { code: 'EAM', label: 'Early active motion', ratio: 1 },
    ],
    blindedRoles: ['assessor'],
    // Stratified permuted blocks: strata site × injured fingers (1 or 2+), 1:1, block sizes drawn from 2, 4 and 6.
    randomisation: { method: 'blocks', blockSizes: [2, 4, 6], fingerLevels: ['1', '2+'], subjectPrefix: 'TEMPO' },
    unblindingRoles: ['investigator'],
    // Schedule of assessments; day 0 is the date of the tendon repair.
    schedule: [
      { key: 'baseline', label: 'Baseline', offsetDays: 0, before: 0, after: 3, forms: ['baseline'], blinded: false, required: true },
      { key: 'therapy_start', label: 'Therapy start', offsetDays: 3, before: 2, after: 2, forms: ['therapy_session'], blinded: false, required: true },
      { key: 'week2', label: 'Week 2', offsetDays: 14, before: 3, after: 3, forms: ['therapy_session'], blinded: false, required: true },
      { key: 'week4', label: 'Week 4', offsetDays: 28, before: 3, after: 3, forms: ['therapy_session'], blinded: false, required: true },
      { key: 'week6', label: 'Week 6', offsetDays: 42, before: 5, after: 5, forms: ['follow_up'], blinded: true, required: true },
      { key: 'week12', label: 'Week 12 (primary)', offsetDays: 84, before: 7, after: 7, forms: ['follow_up'], blinded: true, required: true },
      { key: 'week26', label: 'Week 26', offsetDays: 182, before: 14, after: 14, forms: ['follow_up'], blinded: true, required: true },
    ],
    // The therapy programme of each arm (lib/therapy/programmes.ts).
    programmes: { EPM: 'tempo_ft_epm', EAM: 'tempo_ft_eam' },
  },
  sites: [
    { code: 'HHC', name: 'Harbourside Hand Centre', timeZone: 'Europe/London', recruitmentTarget: 40 },
    { code: 'MLB', name: 'Millbrook General', timeZone: 'Europe/London', recruitmentTarget: 40 },
    { code: 'KVH', name: 'Kestrel Vale Hospital', timeZone: 'Europe/Dublin', recruitmentTarget: 40 },
    { code: 'NPU', name: 'Northpoint University Hospital', timeZone: 'Europe/Oslo', recruitmentTarget: 40 },
  ],
};
