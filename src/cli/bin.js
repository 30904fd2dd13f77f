#!/usr/bin/env node
// Entry point of the `tidemark` command. It runs the compiled JavaScript in .build/ (`npm run build`,
// which `npm ci` and `npm install` run through the `prepare` script). When that build is missing or
// older than a source file, it runs the TypeScript sources through tsx instead, with a note (a
// developer's checkout), or, where tsx is not installed, says how to build and exits with 1.
import { existsSync, readdirSync, statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const SRC = fileURLToPath(new URL('..', import.meta.url));
const BUILD = fileURLToPath(new URL('../../.build/', import.meta.url));

/** Why the build cannot be used (a missing or older output file), or undefined when it is current. */
function staleBuild() {
  if (!existsSync(`${BUILD}cli/main.js`)) return 'there is no build in .build/';
  for (const file of readdirSync(SRC, { recursive: true })) {
    if (!file.endsWith('.ts') || file.endsWith('.d.ts')) continue;
    const out = `${BUILD}${file.slice(0, -3)}.js`;
    if (!existsSync(out)) return `src/${file} has no build`;
    if (statSync(`${SRC}${file}`).mtimeMs > statSync(out).mtimeMs) return `src/${file} is newer than its build`;
  }
  return undefined;
}

async function loadMain() {
  const stale = staleBuild();
  if (!stale) return (await import('../../.build/cli/main.js')).main;
  let register;
  try {
    ({ register } = await import('tsx/esm/api'));
  } catch {
    process.stderr.write(`tidemark: ${stale}; run \`npm run build\` in ${fileURLToPath(new URL('../..', import.meta.url))}\n`);
    process.exit(1);
  }
  process.stderr.write(`tidemark: note: ${stale}; running the TypeScript sources (slow start). \`npm run build\` makes it fast\n`);
  register();
  return (await import('./main.ts')).main;
}

// --debug: stack traces point into the TypeScript sources (the build has source maps)
if (process.argv.includes('--debug')) process.setSourceMapsEnabled(true);
const main = await loadMain();
// a closed pipe (`tidemark flows | head`) is a normal end, not an error
process.stdout.on('error', (e) => {
  if (e.code === 'EPIPE') process.exit(0);
  throw e;
});
process.exitCode = await main(process.argv.slice(2), {
  stdout: (s) => process.stdout.write(s),
  stderr: (s) => process.stderr.write(s),
  stderrIsTTY: Boolean(process.stderr.isTTY),
  stdoutIsTTY: Boolean(process.stdout.isTTY),
});
