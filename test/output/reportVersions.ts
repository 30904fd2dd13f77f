/**
 * Two versions of a report folder for the kill test: different file sets (B drops A's by-plan tables
 * and adds its own) and different contents under the same names, large enough that writing takes a
 * while. Deterministic.
 */
export function reportVersion(v: 'A' | 'B'): Map<string, string> {
  const files = new Map<string, string>();
  const body = (name: string) => `${v}:${name}\n${`${v}${name},0.123,456\n`.repeat(2000)}`;
  files.set('index.html', body('index.html'));
  files.set('summary.md', body('summary.md'));
  const tables = v === 'A' ? ['by-plan', 'growth', 'retention', 'stateMix', 'survival'] : ['growth', 'retention', 'stateMix', 'survival', 'by-region', 'projection'];
  for (const t of tables) {
    files.set(`${t}.csv`, body(`${t}.csv`));
    files.set(`${t}.json`, body(`${t}.json`));
  }
  for (let i = 0; i < 12; i++) files.set(`chart-${String(i).padStart(2, '0')}.json`, body(`chart-${i}`));
  return files;
}

/** Steps of one replaceFolder over an existing folder: one per file, then written, set aside, in place, removed. */
export function stepsOf(v: 'A' | 'B'): number {
  return reportVersion(v).size + 4;
}
