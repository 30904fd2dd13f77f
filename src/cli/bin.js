#!/usr/bin/env node
// Entry point: runs the TypeScript sources directly through tsx, so `npx tidemark` works right after
// `npm ci` with no build step.
import { register } from 'tsx/esm/api';

register();
// a closed pipe (`tidemark flows | head`) is a normal end, not an error
process.stdout.on('error', (e) => {
  if (e.code === 'EPIPE') process.exit(0);
  throw e;
});
const { main } = await import('./main.ts');
process.exitCode = await main(process.argv.slice(2), {
  stdout: (s) => process.stdout.write(s),
  stderr: (s) => process.stderr.write(s),
  stderrIsTTY: Boolean(process.stderr.isTTY),
  stdoutIsTTY: Boolean(process.stdout.isTTY),
});
