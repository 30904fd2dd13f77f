import { describe, expect, it } from 'vitest';
import { rowLine } from '../../src/cli/common.js';
import type { RowAccount } from '../../src/ingest/eventLog.js';

const account = (over: Partial<RowAccount>): RowAccount => ({
  read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines: { read: 0, header: 0, blank: 0, records: 0, rejected: 0 }, ...over,
});

describe('rowLine(account)', () => {
  it('when every row is one line after the header then lines are not shown', () => {
    const r = account({ read: 1204, used: 1190, notKeyEvent: 10, rejected: { 'bad timestamp': 4 }, lines: { read: 1205, header: 1, blank: 0, records: 1200, rejected: 4 } });
    expect(rowLine(r)).toBe('rows: 1,204 read, 1,190 used, 10 not key events, 4 rejected (bad timestamp 4)');
  });

  it('when blank lines, records over several lines or stray quotes make lines differ then they are shown as a sum', () => {
    const r = account({ read: 203, used: 200, rejected: { 'unclosed quote': 3 }, lines: { read: 212, header: 1, blank: 2, records: 206, rejected: 3 } });
    // 212 = 1 + 2 + 206 + 3, the identity written out
    expect(rowLine(r)).toBe('rows: 203 read, 200 used, 3 rejected (unclosed quote 3); lines: 212 read = 1 header + 2 blank + 206 in rows + 3 in rejected rows');
  });
});

describe('rowLine(account): order of the reasons', () => {
  it('when reasons were met in different orders then the line lists them by count, then by name, the same either way', () => {
    const lines = { read: 9, header: 1, blank: 0, records: 4, rejected: 4 };
    const a = account({ read: 8, used: 4, rejected: { 'bad timestamp': 2, 'wrong number of fields': 1, 'missing user id': 1 }, lines });
    const b = account({ read: 8, used: 4, rejected: { 'missing user id': 1, 'wrong number of fields': 1, 'bad timestamp': 2 }, lines });
    expect(rowLine(a)).toBe('rows: 8 read, 4 used, 4 rejected (bad timestamp 2, missing user id 1, wrong number of fields 1)');
    expect(rowLine(b)).toBe(rowLine(a));
  });
});
