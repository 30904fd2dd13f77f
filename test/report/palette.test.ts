/**
 * The palettes stay distinguishable for the common colour-vision deficiencies.
 * Simulation: Machado, Oliveira & Fernandes (2009), "A physiologically-based model for simulation of
 * color vision deficiency", IEEE TVCG 15(6) — severity-1.0 matrices applied in linear RGB (the matrix
 * values are from memory). Colour difference: CIE 1976 ΔE*ab from sRGB (IEC 61966-2-1) via XYZ (D65),
 * common practice. A ΔE above about 10 is plainly visible; we require 20 for every pair within a set.
 */
import { describe, expect, it } from 'vitest';
import { RAMP, SERIES, STATE_COLOURS, seriesColour, seriesDash } from '../../src/report/palette.js';

const SIM: Record<string, number[][]> = {
  normal: [[1, 0, 0], [0, 1, 0], [0, 0, 1]],
  protanopia: [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]],
  deuteranopia: [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.01182, 0.04294, 0.968881]],
  tritanopia: [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.3039]],
};

const linear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
function lab(rgb: number[]): number[] {
  const [r, g, b] = rgb;
  const X = 0.4124 * r + 0.3576 * g + 0.1805 * b, Y = 0.2126 * r + 0.7152 * g + 0.0722 * b, Z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
  const f = (t: number) => (t > 0.008856 ? Math.cbrt(t) : 7.787 * t + 16 / 116);
  return [116 * f(Y) - 16, 500 * (f(X / 0.95047) - f(Y)), 200 * (f(Y) - f(Z / 1.08883))];
}
/** CIELAB of `hex` as seen under the simulation `kind`. */
function seen(hex: string, kind: string): number[] {
  const m = SIM[kind];
  const rgb = [1, 3, 5].map((i) => linear(parseInt(hex.slice(i, i + 2), 16) / 255));
  return lab(m.map((row) => Math.min(1, Math.max(0, row[0] * rgb[0] + row[1] * rgb[1] + row[2] * rgb[2]))));
}
const deltaE = (a: string, b: string, kind: string) => Math.hypot(...seen(a, kind).map((v, k) => v - seen(b, kind)[k]));
const KINDS = Object.keys(SIM);

describe('state palette', () => {
  it.each(KINDS)('every pair of states differs by ΔE*ab ≥ 20 under %s', (kind) => {
    const states = Object.entries(STATE_COLOURS);
    for (let i = 0; i < states.length; i++) {
      for (let j = i + 1; j < states.length; j++) {
        expect(deltaE(states[i][1], states[j][1], kind), `${states[i][0]} vs ${states[j][0]}`).toBeGreaterThanOrEqual(20);
      }
    }
  });
});

describe('series palette (colours that are not states)', () => {
  it.each(KINDS)('every pair of series colours differs by ΔE*ab ≥ 20 under %s', (kind) => {
    for (let i = 0; i < SERIES.length; i++) {
      for (let j = i + 1; j < SERIES.length; j++) expect(deltaE(SERIES[i], SERIES[j], kind), `${SERIES[i]} vs ${SERIES[j]}`).toBeGreaterThanOrEqual(20);
    }
  });

  it('no series colour can be taken for a state: ΔE*ab ≥ 30 from every state colour in normal vision, ≥ 10 under each deficiency', () => {
    for (const s of SERIES) {
      for (const [state, hex] of Object.entries(STATE_COLOURS)) {
        expect(deltaE(s, hex, 'normal'), `${s} vs ${state}`).toBeGreaterThanOrEqual(30);
        for (const kind of KINDS.slice(1)) expect(deltaE(s, hex, kind), `${s} vs ${state} under ${kind}`).toBeGreaterThanOrEqual(10);
      }
    }
  });

  it('beyond five series the dash pattern changes with the colour, so ten series are ten (colour, dash) pairs', () => {
    const pairs = new Set(Array.from({ length: 10 }, (_, i) => `${seriesColour(i)} ${seriesDash(i).join(',')}`));
    expect(pairs.size).toBe(10);
    expect(seriesDash(0)).toEqual([]);
  });
});

describe('sequential ramp', () => {
  it.each(KINDS)('lightness falls at every stop, by L* ≥ 10, and neighbours differ by ΔE*ab ≥ 12, under %s', (kind) => {
    for (let i = 1; i < RAMP.length; i++) {
      expect(seen(RAMP[i - 1], kind)[0] - seen(RAMP[i], kind)[0], `${RAMP[i - 1]} → ${RAMP[i]}`).toBeGreaterThanOrEqual(10);
      expect(deltaE(RAMP[i - 1], RAMP[i], kind)).toBeGreaterThanOrEqual(12);
    }
  });

  it('uses no state colour', () => {
    for (const r of RAMP) for (const hex of Object.values(STATE_COLOURS)) expect(deltaE(r, hex, 'normal')).toBeGreaterThanOrEqual(15);
  });
});
