/**
 * The one set of names for a field's state, used by the status card, the study table, the analyst's queue and
 * progress text, so a field is called the same thing everywhere.
 */
export const FIELD_STATUS_WORDS: Readonly<Record<string, string>> = {
  uploading: 'Uploading',
  ingesting: 'Processing',
  ready: 'Ready to register',
  registered: 'Registered: ready to link',
  linked: 'Linked: waiting for review',
  approved: 'Approved',
  failed: 'Failed',
};

/** @returns the name of a field state (the raw state when unknown) */
export function fieldStatusWord(status: string): string {
  return FIELD_STATUS_WORDS[status] ?? status;
}
