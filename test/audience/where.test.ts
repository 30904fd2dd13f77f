/** `--where COL=VALUE`: split at the first `=`, grouped by column; worked examples. */
import { describe, expect, it } from 'vitest';
import { parseWhere, whereColumns } from '../../src/audience/where.js';

describe('parseWhere', () => {
  it('groups values by column in the order given; an empty value stands for "no value"', () => {
    expect(parseWhere(['plan=pro', 'channel=', 'plan=studio', 'plan=pro'])).toEqual([
      { column: 'plan', values: ['pro', 'studio'] },
      { column: 'channel', values: [''] },
    ]);
  });

  it('splits at the first "=", so a value may hold "=" and spaces', () => {
    expect(parseWhere(['note=a=b c'])).toEqual([{ column: 'note', values: ['a=b c'] }]);
  });

  it('refuses a text with no "=" or no column', () => {
    expect(() => parseWhere(['plan'])).toThrow("'plan' is not COLUMN=VALUE");
    expect(() => parseWhere(['=pro'])).toThrow("'=pro' names no column");
  });
});

describe('whereColumns', () => {
  it('finds each column, and names a missing one with "did you mean"', () => {
    expect(whereColumns(parseWhere(['channel=x', 'plan=y']), ['plan', 'channel'])).toEqual([1, 0]);
    expect(() => whereColumns(parseWhere(['plna=y']), ['plan', 'channel'])).toThrow("the events have no column 'plna'");
  });
});
