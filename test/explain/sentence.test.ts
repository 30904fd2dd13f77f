import { describe, expect, it } from 'vitest';
import { kitagawaFromCounts } from '../../src/explain/kitagawa.js';
import { DEFAULT_STATE_LABELS, decompositionSentence } from '../../src/explain/sentence.js';

const tenure = { veteran: 'veterans', newcomer: 'newcomers' };

describe('decompositionSentence', () => {
  it('tells the change and its parts by magnitude, in points to one decimal', () => {
    // Makerspace bookings, members by tenure. Base: veterans 360/600, newcomers 120/400 (48.0%);
    // compare: veterans 332/597, newcomers 130/403 (46.2%). By hand:
    //   veterans' rate effect  (332/597 − 0.6)(0.6 + 0.597)/2 = −0.02627 → 2.6
    //   newcomers' rate effect (130/403 − 0.3)(0.4 + 0.403)/2 = +0.00907 → 0.9
    //   mix (−0.003)(0.6 + 332/597)/2 + (0.003)(0.3 + 130/403)/2 = −0.00080 → 0.1
    const r = kitagawaFromCounts([
      { key: 'veteran', n0: 600, retained0: 360, n1: 597, retained1: 332 },
      { key: 'newcomer', n0: 400, retained0: 120, n1: 403, retained1: 130 },
    ]);
    expect(r.groups[0].rateEffect).toBeCloseTo(-0.02627, 5);
    expect(r.groups[1].rateEffect).toBeCloseTo(0.00907, 5);
    expect(r.mixEffect).toBeCloseTo(-0.0008, 5);
    expect(decompositionSentence(r, { grain: 'one-week', labels: tenure })).toBe(
      "Overall one-week retention fell 1.8 points: veterans' own retention cost 2.6, newcomers' gained 0.9, the shift toward newcomers cost 0.1.",
    );
  });

  it('with unnamedGroups names no group: total rate effect within groups, mix between groups (per-person columns)', () => {
    // The same makerspace table as above, keyed by member emails: rate effects −2.627 + 0.907 = −1.72 → 1.7; mix −0.08 → 0.1.
    const r = kitagawaFromCounts([
      { key: 'v@makerspace.example', n0: 600, retained0: 360, n1: 597, retained1: 332 },
      { key: 'n@makerspace.example', n0: 400, retained0: 120, n1: 403, retained1: 130 },
    ]);
    const s = decompositionSentence(r, { grain: 'one-week', labels: { 'v@makerspace.example': 'v@makerspace.example users' }, unnamedGroups: true });
    expect(s).toBe('Overall one-week retention fell 1.8 points: changes within the groups cost 1.7, the shift between groups cost 0.1. The groups are not named: their values are nearly unique per user.');
    expect(s).not.toMatch(/@/);
  });

  it('uses the default state names and the grain word', () => {
    expect(DEFAULT_STATE_LABELS).toEqual({ fresh: 'newcomers', engaged: 'regulars', returned: 'returners' });
    // Same mix; only regulars' rate moves, from 0.5 to 0.55: rate effect 0.05 × 0.5 = 2.5 points.
    const r = kitagawaFromCounts([
      { key: 'engaged', n0: 200, retained0: 100, n1: 200, retained1: 110 },
      { key: 'fresh', n0: 200, retained0: 50, n1: 200, retained1: 50 },
    ]);
    expect(decompositionSentence(r, { grain: 'one-month' })).toBe("Overall one-month retention rose 2.5 points: regulars' own retention gained 2.5.");
  });

  it('leaves out parts under 0.05 points', () => {
    // Second group's rate moves by 0.0008 on half the weight: 0.04 points, left out.
    const r = kitagawaFromCounts([
      { key: 'engaged', n0: 10000, retained0: 5000, n1: 10000, retained1: 5300 },
      { key: 'returned', n0: 10000, retained0: 3000, n1: 10000, retained1: 3008 },
    ]);
    expect(decompositionSentence(r, { grain: 'one-week' })).toBe("Overall one-week retention rose 1.5 points: regulars' own retention gained 1.5.");
  });

  it('says "held steady" for no change, naming parts that cancel', () => {
    // Each group keeps its rate; weights do not move: nothing to say.
    const flat = kitagawaFromCounts([{ key: 'engaged', n0: 100, retained0: 40, n1: 120, retained1: 48 }]);
    expect(decompositionSentence(flat, { grain: 'one-day' })).toBe('Overall one-day retention held steady (no part moved it by 0.05 points or more).');
    // Regulars' rate rises 0.6 → 0.7 while the mix shifts to newcomers (rate 0.2): the parts cancel.
    // Base 0.5·0.6 + 0.5·0.2 = 0.4; compare c·0.7 + (1 − c)·0.2 = 0.4 ⇒ c = 0.4.
    const cancel = kitagawaFromCounts([
      { key: 'engaged', n0: 500, retained0: 300, n1: 400, retained1: 280 },
      { key: 'fresh', n0: 500, retained0: 100, n1: 600, retained1: 120 },
    ]);
    expect(Math.abs(cancel.change!)).toBeLessThan(1e-12);
    // rate effect 0.1 × 0.9/2 = 4.5 points; mix (−0.1)(1.3)/2 + (0.1)(0.4)/2 = −4.5 points.
    expect(decompositionSentence(cancel, { grain: 'one-week' })).toBe(
      "Overall one-week retention held steady: regulars' own retention gained 4.5, the shift toward newcomers cost 4.5.",
    );
  });

  it("writes 's for a label that does not end in s, and 'point' for 1.0", () => {
    const r = kitagawaFromCounts([{ key: 'crew', n0: 100, retained0: 50, n1: 100, retained1: 49 }]);
    expect(decompositionSentence(r, { grain: 'one-week', labels: { crew: 'the crew' } })).toBe(
      "Overall one-week retention fell 1.0 point: the crew's own retention cost 1.0.",
    );
  });

  it('says when a period has no users', () => {
    const r = kitagawaFromCounts([{ key: 'fresh', n0: 0, retained0: 0, n1: 10, retained1: 3 }]);
    expect(decompositionSentence(r, { grain: 'one-week' })).toBe('Overall one-week retention cannot be compared: there are no users in the earlier period.');
  });

  it('adds that association is not cause when the groups are behaviours', () => {
    const r = kitagawaFromCounts([
      { key: 'booked a workshop', n0: 100, retained0: 70, n1: 100, retained1: 75 },
      { key: 'did not', n0: 100, retained0: 30, n1: 100, retained1: 30 },
    ]);
    const s = decompositionSentence(r, { grain: 'one-week', labels: { 'booked a workshop': 'workshop bookers', 'did not': 'the others' }, behaviouralGroups: true });
    expect(s).toBe(
      "Overall one-week retention rose 2.5 points: workshop bookers' own retention gained 2.5. The groups are defined by behaviour, so these parts show association with staying, not its cause.",
    );
  });
});
