/**
 * The --by value of a (user, period): on the latest event; on a tie, the largest value in Unicode
 * code-point order, whatever the order of the rows (README, "--by in every engine").
 */
import { describe, expect, it } from 'vitest';
import { compareCodePoints } from '../../../src/engines/memory/attributes.js';
import { MemoryEngine } from '../../../src/engines/memory/index.js';
import { filesSource } from '../../../src/engines/types.js';
import { rulesOf, tempDir } from '../../core/helpers.js';

describe('compareCodePoints', () => {
  it('orders as UTF-8 bytes do (Unicode Standard §2.5), not as JavaScript code units', () => {
    // U+1F600 is F0 9F 98 80 in UTF-8, U+FF61 is EF BD A1: the emoji is larger (hand-encoded, RFC 3629)
    expect(compareCodePoints('\u{1F600}', '\uFF61')).toBeGreaterThan(0);
    expect('\u{1F600}' < '\uFF61').toBe(true); // JavaScript's code-unit order says the opposite
    expect(Buffer.compare(Buffer.from('\u{1F600}'), Buffer.from('\uFF61'))).toBeGreaterThan(0);
    for (const [a, b] of [['pro', 'hobby'], ['', 'a'], ['ab', 'a'], ['Ω', 'z'], ['\uE000', '\uD7FF']]) {
      expect(Math.sign(compareCodePoints(a, b))).toBe(Buffer.compare(Buffer.from(a), Buffer.from(b)));
    }
  });
});

describe('the --by value on a tie', () => {
  it('is the largest value, in either row order', async () => {
    const t = tempDir();
    try {
      const rows = ['m1,2026-03-02T10:00:00Z,booking,hobby', 'm1,2026-03-02T10:00:00Z,booking,studio', 'm1,2026-03-02T10:00:00Z,booking,', 'm1,2026-03-09T10:00:00Z,booking,hobby'];
      const rules = rulesOf({ grain: 'week', lapseLimit: 1 });
      const cells = async (order: string[]) => {
        const f = t.file(`f${order.length}${order[0].slice(-3)}.csv`, ['user_id,timestamp,event,plan', ...order].join('\n'));
        return (await new MemoryEngine().run(filesSource([f]), rules, { by: 'plan' })).waist.tables.segmentCells?.cells;
      };
      const a = await cells(rows);
      const b = await cells([rows[2], rows[1], rows[0], rows[3]]);
      expect(a).toEqual([{ to: '2026-03-09', state: 'fresh', segment: 'studio', n: 1, retained: 1 }]);
      expect(b).toEqual(a);
    } finally {
      t.done();
    }
  });
});
