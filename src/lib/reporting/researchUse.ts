/**
 * The caution every result carries wherever it goes (pages, printouts, JSON replies, CSV files): results could
 * reach a patient, and they are not validated for that.
 */
export const RESEARCH_USE_NOTICE = 'Research use only. Not for diagnosis or treatment decisions.';

/**
 * A JSON result reply with the caution as its first member, so it is seen by anyone reading the raw reply.
 * @param body - the result object
 */
export function researchUseReply<T extends object>(body: T): { caution: typeof RESEARCH_USE_NOTICE } & T {
  return { caution: RESEARCH_USE_NOTICE, ...body };
}
