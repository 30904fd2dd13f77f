/**
 * digest.txt: the report's headline in plain text, at most {@link DIGEST_LINES} lines, to paste into
 * a message. No markup and no escapes: data text enters with its control codes and direction
 * overrides replaced by U+FFFD (they could reorder or hide text), and cut with "…" when long.
 */
import type { ReportModel } from './build.js';
import { comparisonText, lineText } from './story.js';
import { plural } from '../text/plural.js';

export const DIGEST_LINES = 15;
/** Warnings quoted in the digest at most (the rest are counted). */
const WARNINGS_SHOWN = 2;

// C0 and C1 controls, DEL, line/paragraph separators, bidi embeddings, overrides and isolates
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

/** Text as one plain line: line breaks and tabs as spaces, other controls replaced, spaces collapsed, cut to `max` characters. */
export function plainLine(text: string, max = 400): string {
  const s = text.replace(/[\r\n\t]+/g, ' ').replace(CONTROL, '\uFFFD').replace(/\s+/g, ' ').trim();
  return s.length > max ? `${s.slice(0, max - 1)}…` : s;
}

/** The digest: title, comparison, the story, what to read with care, the cautions, and where the rest is. */
export function reportDigest(m: ReportModel, generatedAt: string): string {
  const lines = [
    plainLine(`${m.title}: ${m.subtitle}`),
    plainLine(comparisonText(m.comparison, m.grainWord)),
    ...m.story.map((l) => plainLine(`- ${lineText(l)}`, 600)),
  ];
  const shown = m.warnings.slice(0, WARNINGS_SHOWN);
  for (const w of shown) lines.push(plainLine(`! ${w}`, 300));
  if (m.warnings.length > shown.length) lines.push(`! …and ${plural(m.warnings.length - shown.length, 'more warning')} in the report.`);
  lines.push('Cautions: the report shows aggregates only, never a user id. A behaviour that goes with staying is a correlation, not a cause: test a change before acting on it.');
  lines.push(plainLine(`Charts, tables and the data behind them: index.html. Generated ${generatedAt} by tidemark.`));
  return `${lines.slice(0, DIGEST_LINES).join('\n')}\n`;
}
