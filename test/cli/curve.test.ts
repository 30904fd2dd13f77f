/**
 * `curve` tables show how each fit ended: a fit that did not converge or lies on the edge of the
 * search says so in the table, not only in the JSON.
 */
import { describe, expect, it } from 'vitest';
import { fitFlag, formatCurve, type CurveOutput } from '../../src/cli/commands/curve.js';
import { fitSbg } from '../../src/curve/sbg.js';
import { runCli } from '../report/fixtures.js';

const MODEL = 'shifted-beta-geometric (Fader & Hardie 2007)';

describe('curve table: fits that did not converge or lie on the boundary', () => {
  it('a boundary fit is marked in its row and explained under the table (and flagged in the JSON)', async () => {
    // half the members leave at once and the rest never do: the maximum is the limit α, β → 0
    // (the module comment of curve/sbg.ts; fitSbg's own test checks the flag)
    const t = await runCli(['curve', '--alive', '100,50,50,50,50']);
    expect(t.code, t.err).toBe(0);
    expect(t.out).toMatch(/^cohort .* fit$/m);
    expect(t.out).toMatch(/^given .*on boundary$/m);
    expect(t.out).toMatch(/on boundary: the best fit lies at the edge of the search/);
    const j = JSON.parse((await runCli(['curve', '--alive', '100,50,50,50,50', '--format', 'json'])).out);
    expect(j.boundary).toBe(true);
  });

  it('a fit that did not converge says so in its row and under the table', () => {
    const fit = fitSbg([1000, 631, 468, 382, 326, 289, 262, 241]);
    const out: CurveOutput = {
      model: MODEL,
      fits: [
        { cohort: '2026-05-04', survivors: [1000, 631, 468, 382, 326, 289, 262, 241], ...fit },
        { cohort: '2026-05-11', survivors: [1000, 631, 468, 382, 326, 289, 262, 241], ...fit, converged: false },
      ],
      skipped: [],
    };
    const text = formatCurve(out, 'table');
    expect(text).toMatch(/^2026-05-04 .* ok$/m);
    expect(text).toMatch(/^2026-05-11 .* not converged$/m);
    expect(text).toMatch(/not converged: the search stopped before the likelihood settled/);
    expect(fitFlag({ converged: false, boundary: true })).toBe('not converged, on boundary');
  });

  it('a fit that converged inside the box adds no column (Fader & Hardie 2007, regular customers)', async () => {
    const t = await runCli(['curve', '--alive', '1000,631,468,382,326,289,262,241']);
    expect(t.out).not.toMatch(/ fit$|boundary|converged/m);
  });
});
