/**
 * Seeded booking logs of the makerspace app for the store's tests (invented data), cut into the files
 * a weekly routine would apply: by period of the rules (split with plain UTC arithmetic, so the rules
 * used with these files keep the UTC zone), or at arbitrary points.
 */
import { mulberry32, randInt } from '../stats/prng.js';

export interface Booking {
  user: string;
  /** Epoch ms, UTC. */
  ms: number;
  event: string;
  plan: string;
}

export const DAY = 86_400_000;
/** Monday 2026-03-02, 00:00 UTC. */
export const START = Date.UTC(2026, 2, 2);
const EVENTS = ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled'];

/**
 * `members` members over `days` days: each joins on a random day, books in bursts separated by gaps
 * that grow with a member's drift, and may stop; 1–4 events a visit at random hours.
 */
export function bookings(seed: number, members = 80, days = 84): Booking[] {
  const rnd = mulberry32(seed);
  const out: Booking[] = [];
  for (let m = 0; m < members; m++) {
    let day = randInt(rnd, 0, Math.floor(days * 0.8));
    const plan = ['hobby', 'studio', 'pro'][randInt(rnd, 0, 2)];
    const stay = 0.6 + 0.35 * rnd();
    while (day < days) {
      const n = randInt(rnd, 1, 4);
      for (let k = 0; k < n; k++) out.push({ user: `m${m}`, ms: START + day * DAY + randInt(rnd, 6, 21) * 3_600_000 + randInt(rnd, 0, 3599) * 1000, event: EVENTS[randInt(rnd, 0, 3)], plan });
      if (rnd() > stay) break;
      day += 1 + Math.floor(-Math.log(1 - rnd()) * 5);
    }
  }
  // out of time order, as exports often are
  for (let i = out.length - 1; i > 0; i--) {
    const j = randInt(rnd, 0, i);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

export function bookingsCsv(events: readonly Booking[]): string {
  return ['user_id,timestamp,event,plan', ...events.map((e) => `${e.user},${new Date(e.ms).toISOString()},${e.event},${e.plan}`)].join('\n') + '\n';
}

/** The UTC period index of an instant: days since START, weeks (Monday) since START, or calendar months. */
export function periodIndex(ms: number, grain: 'day' | 'week' | 'month'): number {
  const d = new Date(ms);
  if (grain === 'month') return d.getUTCFullYear() * 12 + d.getUTCMonth();
  const days = Math.floor((ms - START) / DAY);
  return grain === 'day' ? days : Math.floor(days / 7);
}

/** The events cut into consecutive batches of whole periods: `sizes[i % sizes.length]` periods each. */
export function batchesByPeriod(events: readonly Booking[], grain: 'day' | 'week' | 'month', sizes: readonly number[] = [1]): Booking[][] {
  const idx = events.map((e) => periodIndex(e.ms, grain));
  const lo = Math.min(...idx), hi = Math.max(...idx);
  const out: Booking[][] = [];
  let p = lo, i = 0;
  while (p <= hi) {
    const n = sizes[i++ % sizes.length];
    const batch = events.filter((_, k) => idx[k] >= p && idx[k] < p + n);
    if (batch.length) out.push(batch);
    p += n;
  }
  return out;
}
