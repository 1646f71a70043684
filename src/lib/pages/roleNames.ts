/**
 * The one name of each role on screens and in e-mails (the stored role values are short codes). Pure, for pages,
 * islands and mails alike.
 */
export const ROLE_NAMES = { admin: 'administrator', biologist: 'biologist', analyst: 'analyst', collaborator: 'collaborator' } as const;

/**
 * @param role - a stored role value
 * @param o.capital - start with a capital letter (a label on its own)
 * @returns the role's name, or the value itself when unknown
 */
export function roleName(role: string, o: { capital?: boolean } = {}): string {
  const name: string = (ROLE_NAMES as Record<string, string>)[role] ?? role;
  return o.capital ? name[0].toUpperCase() + name.slice(1) : name;
}
