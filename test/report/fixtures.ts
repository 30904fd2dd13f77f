/** Shared for report tests: build a report folder from an event log written to a temp dir. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';
import { mulberry32 } from '../stats/prng.js';

export function tempDir(prefix = 'tidemark-report-'): string {
  return mkdtempSync(join(tmpdir(), prefix));
}

/** Write the demo log; returns the file and every member id in it. */
export function demoEvents(dir: string): { file: string; ids: Set<string> } {
  const lines = ['user_id,timestamp,event,plan,channel'];
  const ids = new Set<string>();
  simulateMakerspace(20260504, (e) => {
    ids.add(e.user_id);
    lines.push(`${e.user_id},${e.timestamp},${e.event},${e.plan},${e.channel}`);
  });
  const file = join(dir, 'events.csv');
  writeFileSync(file, lines.join('\n'));
  return { file, ids };
}

export async function runCli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  const io = bufferIo();
  const code = await main(args, io);
  return { code, out: io.out, err: io.err };
}

/** A small seeded generator (mulberry32, test/stats/prng.ts), for logs that tests invent. */
export const seeded = mulberry32;

/**
 * A log unlike the demo, for checking layout and wording on data the project has never seen: daily
 * activity from 2026-10-05 to 2027-04-18 (across a new year), about 8 new users a day and a one-off
 * 600 on 2027-01-11, event names `visit` and `save`, and a `region` attribute with one very long value.
 * Invented for layout checks only: no test reads a number from it.
 */
export function inventedLog(dir: string, seed = 7): { file: string; days: number; last: string } {
  const rnd = seeded(seed);
  const start = Date.UTC(2026, 9, 5);
  const days = 196;
  const regions = ['north', 'south', 'an island region whose name is far longer than any label should be'];
  const rows = ['user_id,timestamp,event,region'];
  let id = 0;
  for (let d = 0; d < days; d++) {
    const arrivals = d === 98 ? 600 : 4 + Math.floor(rnd() * 9);
    for (let k = 0; k < arrivals; k++) {
      const user = `u${(id++).toString(36)}`;
      const region = regions[Math.floor(rnd() * regions.length)];
      const sticky = rnd() < 0.3;
      for (let a = 0; d + a < days; a++) {
        const p = a === 0 ? 1 : sticky ? 0.3 : 0.45 * 0.9 ** a;
        if (rnd() >= p) continue;
        const ms = start + (d + a) * 86_400_000 + Math.floor(rnd() * 86_000_000);
        rows.push(`${user},${new Date(ms).toISOString()},${rnd() < 0.7 ? 'visit' : 'save'},"${region}"`);
      }
    }
  }
  const file = join(dir, 'invented.csv');
  writeFileSync(file, rows.join('\n'));
  return { file, days, last: new Date(start + (days - 1) * 86_400_000).toISOString().slice(0, 10) };
}
