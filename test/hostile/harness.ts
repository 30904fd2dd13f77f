/**
 * The hostile-input corpus's harness: run a command in-process and check the contract every input
 * must meet. An input ends either in a result (exit 0) or in one clean line on standard error with
 * exit 1 (bad data) or 2 (bad usage): never an internal error, a stack trace, or a raw control code.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { main } from '../../src/cli/main.js';

export interface CliRun {
  code: number;
  out: string;
  err: string;
  /** The stderr lines that are not blank. */
  lines: string[];
}

/** Run `tidemark …argv` in-process. */
export async function run(...argv: string[]): Promise<CliRun> {
  const io = bufferIo();
  const code = await main(argv, io);
  return { code, out: io.out, err: io.err, lines: io.err.split('\n').filter((l) => l.trim() !== '') };
}

/** No internal error, no stack trace, no raw control character on stderr. */
export function expectClean(r: CliRun): void {
  expect(r.err, r.err).not.toMatch(/internal error/);
  expect(r.err, r.err).not.toMatch(/^\s+at \S/m);
  expect(r.err, r.err).not.toMatch(/TidemarkError|TypeError|RangeError|ReferenceError/);
  // eslint-disable-next-line no-control-regex
  expect(r.err.replace(/\n/g, ''), r.err).not.toMatch(/[\u0000-\u001f\u007f]/);
}

/** A refusal: exit `code` (1 bad data, 2 bad usage), exactly one clean line; returns it. */
export function expectRefusal(r: CliRun, code: 1 | 2): string {
  expectClean(r);
  expect(r.code, r.err).toBe(code);
  const failures = r.lines.filter((l) => l.startsWith('tidemark:'));
  expect(failures, r.err).toHaveLength(1);
  return failures[0];
}

/** A temp folder for corpus files; `done()` removes it. */
export function corpusDir(): { dir: string; file(name: string, content: string | Uint8Array): string; done(): void } {
  const dir = mkdtempSync(join(tmpdir(), 'tidemark-hostile-'));
  return {
    dir,
    file(name, content) {
      const f = join(dir, name);
      writeFileSync(f, content);
      return f;
    },
    done: () => rmSync(dir, { recursive: true, force: true }),
  };
}
