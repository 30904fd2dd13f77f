/**
 * The state palette stays distinguishable for the common colour-vision deficiencies.
 * Simulation: Machado, Oliveira & Fernandes (2009), "A physiologically-based model for simulation of
 * color vision deficiency", IEEE TVCG 15(6) — severity-1.0 matrices applied in linear RGB (the matrix
 * values are from memory). Colour difference: CIE 1976 ΔE*ab from sRGB (IEC 61966-2-1) via XYZ (D65),
 * common practice. A ΔE above about 10 is plainly visible; we require 20 for every pair.
 */
import { describe, expect, it } from 'vitest';
import { STATE_COLOURS } from '../../src/report/palette.js';

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

describe('state palette', () => {
  it.each(Object.keys(SIM))('every pair of states differs by ΔE*ab ≥ 20 under %s', (kind) => {
    const m = SIM[kind];
    const labs = Object.entries(STATE_COLOURS).map(([state, hex]) => {
      const rgb = [1, 3, 5].map((i) => linear(parseInt(hex.slice(i, i + 2), 16) / 255));
      const sim = m.map((row) => Math.min(1, Math.max(0, row[0] * rgb[0] + row[1] * rgb[1] + row[2] * rgb[2])));
      return { state, lab: lab(sim) };
    });
    for (let i = 0; i < labs.length; i++) {
      for (let j = i + 1; j < labs.length; j++) {
        const d = Math.hypot(...labs[i].lab.map((v, k) => v - labs[j].lab[k]));
        expect(d, `${labs[i].state} vs ${labs[j].state}`).toBeGreaterThanOrEqual(20);
      }
    }
  });
});
