/** A LIKE/ILIKE pattern matching `text` anywhere, with its own % and _ taken literally (use with ESCAPE '\\'). */
export function containsPattern(text: string): string {
  return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}
