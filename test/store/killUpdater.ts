/**
 * The kill test's child: one update of a store (src/store/update.ts), run with a fixed clock, that
 * kills itself with SIGKILL when it reaches a named step, or holds there (for the concurrency test).
 * Usage: killUpdater.ts DIR FILES_JSON RULES_FILE|- KILL_STEP|- HOLD_STEP|-
 */
import { loadRulesFile } from '../../src/rules/load.js';
import { updateStore, type UpdateStep } from '../../src/store/update.js';

const [dir, filesJson, rulesFile, killAt, holdAt] = process.argv.slice(2);
process.stdout.write('ready\n');
await updateStore({
  dir,
  files: JSON.parse(filesJson) as string[],
  rules: rulesFile === '-' ? undefined : loadRulesFile(rulesFile),
  now: new Date('2026-12-01T06:00:00Z'),
  onStep: (s: UpdateStep) => {
    if (s === killAt) process.kill(process.pid, 'SIGKILL');
    if (s === holdAt) {
      process.stdout.write(`holding ${process.pid}\n`);
      Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 60_000); // until the test kills it
    }
  },
});
process.stdout.write('done\n');
