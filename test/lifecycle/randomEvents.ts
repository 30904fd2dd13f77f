/**
 * Seeded random event logs of the makerspace booking app, kept as plain objects for the behaviour
 * tests: each test reads the CSV through tidemark and recomputes its answer from these objects with
 * plain loops (an independent computation that never sees the EventLog).
 */
import { mulberry32, randInt } from '../stats/prng.js';
import { tempDir } from '../core/helpers.js';
import { parseRules } from '../../src/rules/load.js';
import { readEvents } from '../../src/ingest/read.js';
import type { Rules } from '../../src/rules/schema.js';

export interface RawEvent {
  user: string;
  /** Epoch ms (UTC). */
  ms: number;
  event: string;
  plan: string;
  amount: string;
}

export const NAMES = ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled', 'profile_viewed'];
const DAY = 86_400_000;
/** Monday 2026-03-02, 00:00 UTC. */
export const START = Date.UTC(2026, 2, 2);

/**
 * `users` members over `weeks` weeks: each joins in a random week, is active in a week with a
 * probability that falls with its inactivity and rises with its early class enrolments, and does 1–6
 * events of random names at random days and hours.
 */
export function randomEvents(seed: number, users = 120, weeks = 16): RawEvent[] {
  const rnd = mulberry32(seed);
  const out: RawEvent[] = [];
  for (let u = 0; u < users; u++) {
    const join = randInt(rnd, 0, weeks - 2);
    const keen = rnd() < 0.4;
    const plan = ['hobby', 'studio', 'pro'][randInt(rnd, 0, 2)];
    for (let w = join; w < weeks; w++) {
      if (w > join && rnd() > (keen ? 0.7 : 0.3)) continue;
      const n = randInt(rnd, 1, 6);
      for (let k = 0; k < n; k++) {
        const name = keen && rnd() < 0.4 ? 'class_enrolled' : NAMES[randInt(rnd, 0, NAMES.length - 1)];
        const ms = START + w * 7 * DAY + randInt(rnd, 0, 6) * DAY + randInt(rnd, 6, 22) * 3_600_000 + randInt(rnd, 0, 59) * 60_000;
        out.push({ user: `m${u}`, ms, event: name, plan, amount: (randInt(rnd, 0, 4000) / 100).toFixed(2) });
      }
    }
  }
  // shuffle, so that readers and indexes see rows out of time order
  for (let i = out.length - 1; i > 0; i--) {
    const j = randInt(rnd, 0, i);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

export function rawCsv(events: readonly RawEvent[]): string {
  return ['user_id,timestamp,event,plan,amount', ...events.map((e) => `${e.user},${new Date(e.ms).toISOString()},${e.event},${e.plan},${e.amount}`)].join('\n') + '\n';
}

export function weeklyRules(extra: Record<string, unknown> = {}): Rules {
  return parseRules(JSON.stringify({ grain: 'week', lapseLimit: 2, ...extra }), 'rules.json');
}

/** Write the events as CSV and read them back with detail. */
export async function readRaw(events: readonly RawEvent[], rules: Rules, detail = true) {
  const t = tempDir();
  try {
    const f = t.file('events.csv', rawCsv(events));
    return await readEvents([f], { rules, detail });
  } finally {
    t.done();
  }
}

/** Week index (from START, Monday weeks) of an instant. */
export const weekOf = (ms: number) => Math.floor((ms - START) / (7 * DAY));
/** Day number (days since 1970-01-01, UTC) of an instant. */
export const dayOf = (ms: number) => Math.floor(ms / DAY);
