/**
 * Timestamp parsing. Every accepted form becomes wall-clock ms in the rules' time zone (the local date
 * and time, counted as if UTC), from which the local day and so the period follow.
 *
 * Detection, in this order:
 * 1. Digits only (optionally a sign and a decimal part): epoch time. |value| ≥ 1e11 is milliseconds,
 *    otherwise seconds (1e11 s is in the year 5138; 1e11 ms is in 1973, so the two ranges don't meet
 *    for real event data).
 * 2. ISO 8601 `YYYY-MM-DD`, optionally `T` or a space and `HH:MM[:SS[.fraction]]`, optionally an offset
 *    `Z`, `±HH:MM`, `±HHMM` or `±HH`; or the basic format `YYYYMMDDTHHMM[SS[.fraction]]` with the
 *    same offsets (the `T` is required there: eight digits alone would read as epoch seconds). With an offset it is an instant, put into the zone. Without
 *    one it is already local time in the rules' zone, so its date is its period's date as written.
 * Anything else, and any impossible date or time, is refused (undefined). Years 1900–2199 only.
 */
import type { ZoneClock } from '../periods/zone.js';

export const ISO = /^(\d{4})-(\d{2})-(\d{2})(?:[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d{1,9}))?)?)?\s*(?:([Zz])|([+-])(\d{2})(?::?(\d{2}))?)?$/;
export const ISO_BASIC = /^(\d{4})(\d{2})(\d{2})[Tt](\d{2})(\d{2})(?:(\d{2})(?:[.,](\d{1,9}))?)?(?:([Zz])|([+-])(\d{2})(\d{2})?)?$/;
export const EPOCH = /^[+-]?\d+(?:\.\d+)?$/;
const MIN_MS = Date.UTC(1900, 0, 1);
const MAX_MS = Date.UTC(2200, 0, 1);
const DAYS_IN_MONTH = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];

function daysIn(year: number, month: number): number {
  return month === 2 && ((year % 4 === 0 && year % 100 !== 0) || year % 400 === 0) ? 29 : DAYS_IN_MONTH[month - 1];
}

/** Two ASCII digits at i, or -1. */
function two(s: string, i: number): number {
  const a = s.charCodeAt(i) - 48, b = s.charCodeAt(i + 1) - 48;
  return a >= 0 && a <= 9 && b >= 0 && b <= 9 ? a * 10 + b : -1;
}

/**
 * Days since 1970-01-01 of a proleptic Gregorian date (month 1–12), by integer arithmetic: H. Hinnant,
 * "chrono-Compatible Low-Level Date Algorithms", days_from_civil. Three times faster than Date.UTC.
 * @example daysFromCivil(2026, 12, 28) // 20815
 */
export function daysFromCivil(y: number, m: number, d: number): number {
  y -= m <= 2 ? 1 : 0;
  const era = Math.floor(y / 400);
  const yoe = y - era * 400;
  const doy = Math.floor((153 * (m + (m > 2 ? -3 : 9)) + 2) / 5) + d - 1;
  return era * 146097 + yoe * 365 + Math.floor(yoe / 4) - Math.floor(yoe / 100) + doy - 719468;
}

/** {@link daysFromCivil} for years from 1 on, in 32-bit integer arithmetic (a third faster in the readers' hot path). */
function daysFromCivilAD(y: number, m: number, d: number): number {
  y -= m <= 2 ? 1 : 0;
  const era = (y / 400) | 0;
  const yoe = y - era * 400;
  const doy = (((153 * (m > 2 ? m - 3 : m + 9) + 2) / 5) | 0) + d - 1;
  return era * 146097 + yoe * 365 + ((yoe / 4) | 0) - ((yoe / 100) | 0) + doy - 719468;
}

/** Fast path for the commonest form, `YYYY-MM-DDTHH:MM:SS[.sss]Z`; undefined when s is not in it. */
function fastUtc(s: string): number | undefined {
  const n = s.length;
  if ((n !== 20 && n !== 24) || s.charCodeAt(n - 1) !== 90 /* Z */ || s.charCodeAt(10) !== 84 /* T */) return undefined;
  if (s.charCodeAt(4) !== 45 || s.charCodeAt(7) !== 45 || s.charCodeAt(13) !== 58 || s.charCodeAt(16) !== 58) return undefined;
  const y1 = two(s, 0), y2 = two(s, 2), mo = two(s, 5), d = two(s, 8), h = two(s, 11), mi = two(s, 14), sec = two(s, 17);
  if (y1 < 0 || y2 < 0 || mo < 1 || mo > 12 || d < 1 || h < 0 || h > 23 || mi < 0 || mi > 59 || sec < 0 || sec > 59) return undefined;
  let ms = 0;
  if (n === 24) {
    const a = two(s, 20), b = s.charCodeAt(22) - 48;
    if (s.charCodeAt(19) !== 46 || a < 0 || b < 0 || b > 9) return undefined;
    ms = a * 10 + b;
  }
  const y = y1 * 100 + y2;
  if (d > daysIn(y, mo)) return undefined;
  return daysFromCivil(y, mo, d) * 86_400_000 + ((h * 60 + mi) * 60 + sec) * 1000 + ms;
}

/** Wall-clock ms of a timestamp text, or undefined when it is not a valid timestamp. */
export function parseTimestamp(text: string, clock: ZoneClock): number | undefined {
  const fast = fastUtc(text);
  if (fast !== undefined) {
    const wall = clock.wallMs(fast);
    return wall >= MIN_MS && wall < MAX_MS ? wall : undefined;
  }
  const s = text.trim();
  if (s.length === 0) return undefined;
  let wall: number;
  if (EPOCH.test(s)) {
    const v = Number(s);
    const ms = Math.abs(v) >= 1e11 ? v : v * 1000;
    wall = clock.wallMs(Math.floor(ms));
  } else {
    const m = ISO.exec(s) ?? ISO_BASIC.exec(s);
    if (!m) return undefined;
    const y = +m[1], mo = +m[2], d = +m[3];
    const h = m[4] ? +m[4] : 0, mi = m[5] ? +m[5] : 0, sec = m[6] ? +m[6] : 0;
    const frac = m[7] ? Math.floor(Number(`0.${m[7]}`) * 1000) : 0;
    if (mo < 1 || mo > 12 || d < 1 || d > daysIn(y, mo) || h > 23 || mi > 59 || sec > 60) return undefined;
    // integer day arithmetic, not Date.UTC: Date.UTC reads years 0–99 as 1900–1999
    const local = daysFromCivil(y, mo, d) * 86_400_000 + ((h * 60 + mi) * 60 + Math.min(sec, 59)) * 1000 + frac;
    if (m[8] || m[9]) {
      if (m[10] && (+m[10] > 23 || (m[11] && +m[11] > 59))) return undefined;
      const offMin = m[9] ? (m[9] === '-' ? -1 : 1) * (+m[10] * 60 + (m[11] ? +m[11] : 0)) : 0;
      wall = clock.wallMs(local - offMin * 60_000);
    } else {
      wall = local;
    }
  }
  return wall >= MIN_MS && wall < MAX_MS ? wall : undefined;
}

/** One ASCII digit at b[i] (0–9), or a negative number. */
function digit(b: Uint8Array, i: number): number {
  return b[i] - 48;
}

/** Two ASCII digits at b[i], or -1. */
function twoB(b: Uint8Array, i: number): number {
  const x = b[i] - 48, y = b[i + 1] - 48;
  return x >= 0 && x <= 9 && y >= 0 && y <= 9 ? x * 10 + y : -1;
}

/** 1 for the bytes of ASCII digits. */
const IS_DIGIT = new Uint8Array(256).fill(0, 0).fill(1, 48, 58);

/** The commonest form, `YYYY-MM-DDTHH:MM:SS[.sss]Z` (20 or 24 bytes, `Z` checked by the caller), in straight-line code; NaN when it is not that. */
function utcBytes(b: Uint8Array, s: number, n: number): number {
  const D = IS_DIGIT;
  if (b[s + 4] !== 45 || b[s + 7] !== 45 || b[s + 10] !== 84 || b[s + 13] !== 58 || b[s + 16] !== 58) return NaN;
  if (!(D[b[s]] & D[b[s + 1]] & D[b[s + 2]] & D[b[s + 3]] & D[b[s + 5]] & D[b[s + 6]] & D[b[s + 8]] & D[b[s + 9]] & D[b[s + 11]] & D[b[s + 12]] & D[b[s + 14]] & D[b[s + 15]] & D[b[s + 17]] & D[b[s + 18]])) return NaN;
  const y = b[s] * 1000 + b[s + 1] * 100 + b[s + 2] * 10 + b[s + 3] - 53328; // 48 · 1111
  const mo = b[s + 5] * 10 + b[s + 6] - 528; // 48 · 11
  const d = b[s + 8] * 10 + b[s + 9] - 528;
  const h = b[s + 11] * 10 + b[s + 12] - 528;
  const mi = b[s + 14] * 10 + b[s + 15] - 528;
  const sec = b[s + 17] * 10 + b[s + 18] - 528;
  let ms = 0;
  if (n === 24) {
    if (b[s + 19] !== 46 || !(D[b[s + 20]] & D[b[s + 21]] & D[b[s + 22]])) return NaN;
    ms = b[s + 20] * 100 + b[s + 21] * 10 + b[s + 22] - 5328; // 48 · 111
  }
  if (y < 1899 || y > 2200 || mo < 1 || mo > 12 || d < 1 || d > daysIn(y, mo) || h > 23 || mi > 59 || sec > 60) return NaN;
  return daysFromCivilAD(y, mo, d) * 86_400_000 + ((h * 60 + mi) * 60 + (sec > 59 ? 59 : sec)) * 1000 + ms;
}

/**
 * Wall-clock ms of a timestamp given as its UTF-8 bytes `b[s, e)`, for the readers' hot path: no
 * string is made. It reads the commonest forms itself — ISO 8601 extended `YYYY-MM-DD[(T| )HH:MM[:SS[.f…]]]`
 * with a fraction of up to 6 digits and an optional `Z` or `±HH[[:]MM]`, and plain epoch digits (up to
 * 15) — exactly as {@link parseTimestamp} reads them, and returns NaN for anything else, including
 * invalid and out-of-range values: the caller then decodes the text and asks {@link parseTimestamp},
 * which decides (so the two never disagree; a test checks this on random and hand-picked texts).
 * The fraction's milliseconds are its first three digits: floor(Number('0.' + f) × 1000) equals them for
 * every fraction of 1–6 digits (checked exhaustively when this was written).
 * @example parseTimestampBytes(Buffer.from('2026-05-04T18:30:00Z'), 0, 20, new ZoneClock('UTC')) // 1777919400000
 */
export function parseTimestampBytes(b: Uint8Array, s: number, e: number, clock: ZoneClock): number {
  const n = e - s;
  if ((n === 24 || n === 20) && b[e - 1] === 90) {
    const utc = utcBytes(b, s, n);
    if (utc === utc) {
      const wall = clock.wallMs(utc);
      return wall >= MIN_MS && wall < MAX_MS ? wall : NaN;
    }
  }
  if (n >= 10 && b[s + 4] === 45 && b[s + 7] === 45) {
    const y1 = twoB(b, s), y2 = twoB(b, s + 2), mo = twoB(b, s + 5), d = twoB(b, s + 8);
    if (y1 < 0 || y2 < 0 || mo < 1 || mo > 12 || d < 1) return NaN;
    const y = y1 * 100 + y2;
    if (y < 1899 || y > 2200 || d > daysIn(y, mo)) return NaN;
    let p = s + 10;
    let h = 0, mi = 0, sec = 0, ms = 0;
    if (p < e && (b[p] === 84 || b[p] === 116 || b[p] === 32) && p + 6 <= e) {
      h = twoB(b, p + 1);
      mi = twoB(b, p + 4);
      if (b[p + 3] !== 58 || h < 0 || h > 23 || mi < 0 || mi > 59) return NaN;
      p += 6;
      if (p < e && b[p] === 58) {
        if (p + 3 > e) return NaN;
        sec = twoB(b, p + 1);
        if (sec < 0 || sec > 60) return NaN;
        p += 3;
        if (p < e && (b[p] === 46 || b[p] === 44)) {
          let k = 0;
          let f = 0;
          p++;
          while (p + k < e && digit(b, p + k) >= 0 && digit(b, p + k) <= 9) {
            if (k < 3) f = f * 10 + digit(b, p + k);
            k++;
          }
          if (k === 0 || k > 6) return NaN;
          ms = k === 1 ? f * 100 : k === 2 ? f * 10 : f;
          p += k;
        }
      }
    }
    const local = daysFromCivilAD(y, mo, d) * 86_400_000 + ((h * 60 + mi) * 60 + (sec > 59 ? 59 : sec)) * 1000 + ms;
    let wall: number;
    if (p === e) wall = local;
    else {
      const c = b[p];
      let offMin: number;
      if ((c === 90 || c === 122) && p + 1 === e) offMin = 0;
      else if (c === 43 || c === 45) {
        if (p + 3 > e) return NaN;
        const oh = twoB(b, p + 1);
        if (oh < 0 || oh > 23) return NaN;
        p += 3;
        let om = 0;
        if (p < e) {
          if (b[p] === 58) p++;
          if (p + 2 !== e) return NaN;
          om = twoB(b, p);
          if (om < 0 || om > 59) return NaN;
        }
        offMin = (c === 45 ? -1 : 1) * (oh * 60 + om);
      } else return NaN;
      wall = clock.wallMs(local - offMin * 60_000);
    }
    return wall >= MIN_MS && wall < MAX_MS ? wall : NaN;
  }
  if (n === 0 || n > 15) return NaN;
  let v = 0;
  for (let i = s; i < e; i++) {
    const c = b[i] - 48;
    if (c < 0 || c > 9) return NaN;
    v = v * 10 + c;
  }
  const wall = clock.wallMs(v >= 1e11 ? v : v * 1000);
  return wall >= MIN_MS && wall < MAX_MS ? wall : NaN;
}
