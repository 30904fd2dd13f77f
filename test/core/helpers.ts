/**
 * Helpers for the core-pipeline suite: temp folders, event files of the makerspace booking app, rules
 * text, and a one-call run of the engine.
 */
import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { stringify } from 'yaml';
import { expect } from 'vitest';
import { parseRules } from '../../src/rules/load.js';
import type { Rules } from '../../src/rules/schema.js';
import { filesSource } from '../../src/engines/types.js';
import { classifyWith, ENGINES } from './engines.js';

/** The engine `runEngine` uses; a conformance suite sets it per engine (see engines.ts). */
let engineUnderTest = ENGINES[0];
export function useEngine(name: string): void {
  engineUnderTest = name;
}
import type { RangeOptions } from '../../src/engines/types.js';
import { TidemarkError, type ErrorCode } from '../../src/errors.js';
import type { RefEvent, RefRules } from './reference.js';

/** A fresh temp folder; `done()` removes it. */
export function tempDir(): { dir: string; file(name: string, text: string | Uint8Array): string; done(): void } {
  const dir = mkdtempSync(join(tmpdir(), 'tidemark-'));
  return {
    dir,
    file(name, text) {
      const f = join(dir, name);
      writeFileSync(f, text);
      return f;
    },
    done() {
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Events as CSV with the default header; fields are written bare (tests' ids need no quoting). */
export function eventsCsv(events: readonly RefEvent[]): string {
  return ['user_id,timestamp,event', ...events.map((e) => `${e.user},${e.timestamp},${e.event}`)].join('\n') + '\n';
}

/** Events as NDJSON; epoch timestamps are written as JSON numbers when `numbers` is set. */
export function eventsNdjson(events: readonly RefEvent[], numbers = false): string {
  return (
    events
      .map((e) =>
        JSON.stringify({
          user_id: e.user,
          timestamp: numbers && /^-?\d+$/.test(e.timestamp) ? Number(e.timestamp) : e.timestamp,
          event: e.event,
        }),
      )
      .join('\n') + '\n'
  );
}

/** Rules YAML text for reference rules. */
export function rulesYaml(r: RefRules): string {
  const doc: Record<string, unknown> = { grain: r.grain, lapseLimit: r.lapseLimit };
  if (r.weekStart) doc.weekStart = r.weekStart;
  if (r.timezone) doc.timezone = r.timezone;
  if (r.warmup !== undefined) doc.warmup = r.warmup;
  const activity: Record<string, unknown> = {};
  if (r.keyEvents) activity.keyEvents = r.keyEvents;
  if (r.minEvents !== undefined) activity.minEvents = r.minEvents;
  if (Object.keys(activity).length) doc.activity = activity;
  if (r.splits) doc.splits = r.splits;
  return stringify(doc);
}

export function rulesOf(r: RefRules): Rules {
  return parseRules(rulesYaml(r), 'rules.yaml');
}

/** Write the events to a temp file and run the memory engine's `classify` on them. */
export async function runEngine(
  events: readonly RefEvent[],
  r: RefRules,
  range: RangeOptions = {},
  format: 'csv' | 'ndjson' = 'csv',
  engine = engineUnderTest,
) {
  const t = tempDir();
  try {
    const f = format === 'csv' ? t.file('bookings.csv', eventsCsv(events)) : t.file('bookings.ndjson', eventsNdjson(events));
    return await classifyWith(engine, filesSource([f]), rulesOf(r), range);
  } finally {
    t.done();
  }
}

/** State of each user in each output period, from the engine's rows: `user → {period → state}`. */
export function statesByUser(rows: readonly { user: string; period: string; state: string }[]): Record<string, Record<string, string>> {
  const out: Record<string, Record<string, string>> = {};
  for (const r of rows) (out[r.user] ??= {})[r.period] = r.state;
  return out;
}

/** Awaits `fn`, expects a TidemarkError with `code`; returns it. */
export async function expectTidemarkError(fn: () => Promise<unknown> | unknown, code: ErrorCode): Promise<TidemarkError> {
  let caught: unknown;
  try {
    await fn();
  } catch (e) {
    caught = e;
  }
  expect(caught, 'expected a TidemarkError').toBeInstanceOf(TidemarkError);
  const err = caught as TidemarkError;
  expect(err.code, err.message).toBe(code);
  return err;
}

/** The TidemarkError a synchronous call throws (any other error is rethrown; no error fails the test). */
export function tidemarkErrorOf(fn: () => unknown): TidemarkError {
  try {
    fn();
  } catch (e) {
    if (e instanceof TidemarkError) return e;
    throw e;
  }
  throw new Error('expected a TidemarkError');
}
