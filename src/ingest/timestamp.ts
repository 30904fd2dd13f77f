/**
 * Timestamp parsing. Every accepted form becomes wall-clock ms in the rules' time zone (the local date
 * and time, counted as if UTC), from which the local day and so the period follow.
 *
 * Detection, in this order:
 * 1. Digits only (optionally a sign and a decimal part): epoch time. |value| ≥ 1e11 is milliseconds,
 *    otherwise seconds (1e11 s is in the year 5138; 1e11 ms is in 1973, so the two ranges don't meet
 *    for real event data).
 * 2. ISO 8601 `YYYY-MM-DD`, optionally `T` or a space and `HH:MM[:SS[.fraction]]`, optionally an offset
 *    `Z`, `±HH:MM`, `±HHMM` or `±HH`. With an offset it is an instant, put into the zone. Without
 *    one it is already local time in the rules' zone, so its date is its period's date as written.
 * Anything else, and any impossible date or time, is refused (undefined).
 */
import type { ZoneClock } from '../periods/zone.js';

const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?\s*(?:([Zz])|([+-])(\d{2})(?::?(\d{2}))?)?$/;
const EPOCH = /^[+-]?\d+(?:\.\d+)?$/;
/** Wall-clock ms limits: 1900-01-01 to 2200-01-01. Outside is treated as a bad value. */
const MIN_MS = Date.UTC(1900, 0, 1);
const MAX_MS = Date.UTC(2200, 0, 1);

/** Wall-clock ms of a timestamp text, or undefined when it is not a valid timestamp. */
export function parseTimestamp(text: string, clock: ZoneClock): number | undefined {
  const s = text.trim();
  if (s.length === 0) return undefined;
  let wall: number;
  if (EPOCH.test(s)) {
    const v = Number(s);
    const ms = Math.abs(v) >= 1e11 ? v : v * 1000;
    wall = clock.wallMs(Math.floor(ms));
  } else {
    const m = ISO.exec(s);
    if (!m) return undefined;
    const y = +m[1], mo = +m[2], d = +m[3];
    const h = m[4] ? +m[4] : 0, mi = m[5] ? +m[5] : 0, sec = m[6] ? +m[6] : 0;
    const frac = m[7] ? Math.floor(Number(`0.${m[7]}`) * 1000) : 0;
    if (mo < 1 || mo > 12 || d < 1 || h > 23 || mi > 59 || sec > 60) return undefined;
    const local = Date.UTC(y, mo - 1, d, h, mi, Math.min(sec, 59), frac);
    if (new Date(local).getUTCDate() !== d) return undefined; // 2026-02-30 and the like
    if (m[8] || m[9]) {
      const offMin = m[9] ? (m[9] === '-' ? -1 : 1) * (+m[10] * 60 + (m[11] ? +m[11] : 0)) : 0;
      if (m[10] && (+m[10] > 23 || (m[11] && +m[11] > 59))) return undefined;
      wall = clock.wallMs(local - offMin * 60_000);
    } else {
      wall = local;
    }
  }
  return wall >= MIN_MS && wall < MAX_MS ? wall : undefined;
}
