/**
 * Seeded pseudo-random numbers, so that every sampled result is reproducible: same seed, same output.
 *
 * Generator: mulberry32 (a public-domain 32-bit generator with one word of state; period 2³²). Small and
 * plenty for a few hundred thousand draws per band; not for cryptography. Each 32-bit output u is
 * mapped to (u + 0.5) / 2³², so draws lie in the open interval (0, 1) and log(u) is always finite.
 */
import { TidemarkError } from '../errors.js';

/** A source of uniform draws in (0, 1). */
export type Rng = () => number;

/**
 * A seeded generator.
 *
 * @throws TidemarkError `INPUT_INVALID` when the seed is not a whole number from 0 to 2³² − 1.
 * @example const rng = mulberry32(7); rng() // the same value on every run, in (0, 1)
 */
export function mulberry32(seed: number): Rng {
  if (!Number.isInteger(seed) || seed < 0 || seed > 0xffffffff) {
    throw new TidemarkError('INPUT_INVALID', `seed must be a whole number from 0 to 4294967295 (got ${String(seed)})`, { key: 'seed' });
  }
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return (((t ^ (t >>> 14)) >>> 0) + 0.5) / 4294967296;
  };
}

/**
 * A standard normal draw by the Box–Muller transform (Box & Muller 1958, Annals of Mathematical
 * Statistics 29(2)): z = √(−2 ln u₁)·cos(2π u₂). Uses two uniforms per draw (the sine twin is dropped,
 * which keeps the generator a plain function).
 *
 * @example normal(mulberry32(1)) // a draw from N(0, 1)
 */
export function normal(rng: Rng): number {
  const u1 = rng();
  const u2 = rng();
  return Math.sqrt(-2 * Math.log(u1)) * Math.cos(2 * Math.PI * u2);
}
