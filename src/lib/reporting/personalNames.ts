/**
 * Personal names in a text, found with compromise's lexicon of given names and surnames (it tags people in
 * any case: "jane doe", "JANE DOE", "Doe, Jane"). Server-side only: the lexicon is too large for a page.
 */
import nlp from 'compromise';

/**
 * @param text - words (separators already turned into spaces by the caller)
 * @returns the person mentions found, as written
 */
export function personalNames(text: string): string[] {
  const doc = nlp(text);
  // whole mentions ("Mrs Patel", "J Smith") where compromise groups them, else every word tagged as a person's
  const people = doc.people().out('array') as string[];
  return people.length ? people : (doc.match('#Person').out('array') as string[]);
}
