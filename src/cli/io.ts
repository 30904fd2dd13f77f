/** Where a command writes: stdout for results, stderr for messages. Tests pass their own. */
export interface Io {
  stdout(text: string): void;
  stderr(text: string): void;
  stderrIsTTY?: boolean;
  stdoutIsTTY?: boolean;
}

/** An Io that collects everything, for tests. */
export function bufferIo(): Io & { out: string; err: string } {
  const io = {
    out: '',
    err: '',
    stdout(t: string) {
      io.out += t;
    },
    stderr(t: string) {
      io.err += t;
    },
  };
  return io;
}
