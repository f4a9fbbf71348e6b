/** The invented demo study TEMPO-FT (see the product brief); loaded by scripts/seed-demo.ts. */
export const DEMO_STUDY = {
  code: 'TEMPO-FT',
  title: 'TEMPO-FT: Timing of Early Motion after Flexor Tendon repair',
  status: 'recruiting' as const,
  config: {
    targetParticipants: 160,
    arms: [
      { code: 'EPM', label: 'Early passive motion', ratio: 1 },
      { code: 'EAM', label: 'Early active motion', ratio: 1 },
    ],
    blindedRoles: ['assessor'],
    // Stratified permuted blocks: strata site × injured fingers (1 or 2+), 1:1, block sizes drawn from 2, 4 and 6.
    randomisation: { method: 'blocks', blockSizes: [2, 4, 6], fingerLevels: ['1', '2+'], subjectPrefix: 'TEMPO' },
    unblindingRoles: ['investigator'],
  },
  sites: [
    { code: 'HHC', name: 'Harbourside Hand Centre', timeZone: 'Europe/London', recruitmentTarget: 40 },
    { code: 'MLB', name: 'Millbrook General', timeZone: 'Europe/London', recruitmentTarget: 40 },
    { code: 'KVH', name: 'Kestrel Vale Hospital', timeZone: 'Europe/Dublin', recruitmentTarget: 40 },
    { code: 'NPU', name: 'Northpoint University Hospital', timeZone: 'Europe/Oslo', recruitmentTarget: 40 },
  ],
};
