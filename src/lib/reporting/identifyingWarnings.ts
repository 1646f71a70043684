/**
 * The de-identification check of every free text a request brings in that can reach collaborators or exports
 * (sample codes, group labels, source, notes, field names, uploaded file names), with the name lexicon.
 */
import { looksIdentifying } from './looksIdentifying';
import { personalNames } from './personalNames';

export interface CheckedText {
  /** What the text is, as the start of a sentence: "The code", "The group label", "File name of field 2". */
  what: string;
  value: string | null | undefined;
  /** `code` for codes and names of things; `text` for labels and notes. @default 'text' */
  kind?: 'code' | 'text';
}

/**
 * @param items - the texts to check
 * @returns one message per finding, in the order given (empty when nothing looks identifying)
 */
export function identifyingWarnings(items: readonly CheckedText[]): string[] {
  return items.flatMap((i) => (i.value ? looksIdentifying(i.value, { what: i.what, kind: i.kind ?? 'text', findNames: personalNames }).reasons.map((r) => r.message) : []));
}
