/** Shared for report tests: build a report folder from an event log written to a temp dir. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';

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
