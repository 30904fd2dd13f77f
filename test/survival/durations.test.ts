import { describe, expect, it } from 'vitest';
import { parseDurationsCsv } from '../../src/survival/durations.js';
import { tidemarkErrorOf } from '../core/helpers.js';

describe('parseDurationsCsv', () => {
  it('reads one member per row and adds equal rows together', () => {
    expect(parseDurationsCsv('duration,observed\n3,1\n3,1\n5,0\n')).toEqual([
      { group: '', duration: 3, observed: 1, users: 2 },
      { group: '', duration: 5, observed: 0, users: 1 },
    ]);
  });

  it('reads groups and users in any column order, case-insensitive, with CRLF, BOM and blank lines', () => {
    const text = '\uFEFFGroup,Users,Observed,Duration\r\nwoodshop,4,1,2\r\n\r\nlaser lab,1,0,6\r\nwoodshop,1,1,2\r\n';
    expect(parseDurationsCsv(text, 'members.csv')).toEqual([
      { group: 'woodshop', duration: 2, observed: 1, users: 5 },
      { group: 'laser lab', duration: 6, observed: 0, users: 1 },
    ]);
  });

  it('accepts quoted fields with commas and doubled quotes, and ignores unrelated columns', () => {
    const text = 'member_id,duration,observed,group\nm1,4,1,"textiles, upstairs"\nm2,2,0,"the ""loft"""\n';
    expect(parseDurationsCsv(text)).toEqual([
      { group: 'textiles, upstairs', duration: 4, observed: 1, users: 1 },
      { group: 'the "loft"', duration: 2, observed: 0, users: 1 },
    ]);
  });

  it('names line and column for a bad value', () => {
    const e = tidemarkErrorOf(() => parseDurationsCsv('duration,observed\n3,1\n-2,1\n', 'd.csv'));
    expect(e.code).toBe('INPUT_INVALID');
    expect(e.where).toEqual({ file: 'd.csv', line: 3, column: 'duration' });
    expect(e.oneLine()).toBe("d.csv:3, column duration: duration must be a number ≥ 0, got '-2'");

    const o = tidemarkErrorOf(() => parseDurationsCsv('duration,observed\n3,yes\n', 'd.csv'));
    expect(o.where).toEqual({ file: 'd.csv', line: 2, column: 'observed' });

    const u = tidemarkErrorOf(() => parseDurationsCsv('duration,observed,users\n3,1,\n', 'd.csv'));
    expect(u.where).toEqual({ file: 'd.csv', line: 2, column: 'users' });
  });

  it('names the line of a short row or an unterminated quote', () => {
    expect(tidemarkErrorOf(() => parseDurationsCsv('duration,observed,group\n3,1\n', 'd.csv')).where).toEqual({ file: 'd.csv', line: 2 });
    expect(tidemarkErrorOf(() => parseDurationsCsv('duration,observed,group\n3,1,"open\n', 'd.csv')).where).toEqual({ file: 'd.csv', line: 2 });
  });

  it('requires a header with duration and observed, and suggests a fix for a typo', () => {
    const missing = tidemarkErrorOf(() => parseDurationsCsv('duration,group\n3,a\n', 'd.csv'));
    expect(missing.where).toEqual({ file: 'd.csv', line: 1, column: 'observed' });
    const typo = tidemarkErrorOf(() => parseDurationsCsv('duration,observd\n3,1\n', 'd.csv'));
    expect(typo.where).toEqual({ file: 'd.csv', line: 1, column: 'observd' });
    expect(typo.hint).toBe("did you mean 'observed'?");
    expect(tidemarkErrorOf(() => parseDurationsCsv('', 'd.csv')).where).toEqual({ file: 'd.csv', line: 1 });
    expect(tidemarkErrorOf(() => parseDurationsCsv('duration,observed,duration\n1,1,1\n', 'd.csv')).where.column).toBe('duration');
  });

  it('a header without rows is NOT_ENOUGH_DATA', () => {
    expect(tidemarkErrorOf(() => parseDurationsCsv('duration,observed\n\n', 'd.csv')).code).toBe('NOT_ENOUGH_DATA');
  });
});
