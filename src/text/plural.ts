/**
 * Counts with their nouns, singular for exactly one: "1 period", "2 periods", "1,234 users". Every
 * sentence tidemark writes about a count goes through here, so that no "1 periods" or "1 users" is
 * printed. Numbers are grouped as en-US ("20,063"); a noun whose plural is not the singular plus "s"
 * is passed with its plural ("1 entry", "2 entries").
 */

/** The noun for `n` of it: `singular` for exactly 1 (and −1), else `pluralForm`. @example noun(1, 'week') // 'week' */
export function noun(n: number, singular: string, pluralForm = `${singular}s`): string {
  return Math.abs(n) === 1 ? singular : pluralForm;
}

/**
 * `n` and its noun. Whole numbers are grouped ("1,234"); others are written as given.
 * @example plural(1, 'period') // '1 period'
 * @example plural(20063, 'user') // '20,063 users'
 * @example plural(2, 'entry', 'entries') // '2 entries'
 */
export function plural(n: number, singular: string, pluralForm = `${singular}s`): string {
  const shown = Number.isInteger(n) ? n.toLocaleString('en-US') : String(n);
  return `${shown} ${noun(n, singular, pluralForm)}`;
}
