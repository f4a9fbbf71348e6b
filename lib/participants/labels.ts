/** Words shown for a participant's status (the stored codes stay in the database, exports and the audit trail). */
export const PARTICIPANT_STATUS_LABEL: Record<string, string> = {
  screening: 'in screening',
  pending: 'awaiting eligibility',
  eligible: 'eligible, not yet randomised',
  not_eligible: 'not eligible',
  declined: 'declined',
  other: 'not enrolled (other reason)',
  randomised: 'randomised',
};

/** The label for a status code; an unknown code is shown as it is stored. */
export const participantStatusLabel = (status: string) => PARTICIPANT_STATUS_LABEL[status] ?? status;
