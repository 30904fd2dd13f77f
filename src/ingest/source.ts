/**
 * Reading an event file once, in chunks, into one reusable buffer. Works for regular files, FIFOs and
 * /dev/stdin alike (no seeking, no second pass). Open and read failures become one clear
 * TidemarkError naming the file.
 */
import { once } from 'node:events';
import { read } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import { createGunzip } from 'node:zlib';
import { TidemarkError } from '../errors.js';

/** Paths of the standard input. When it is a socket (as a parent Node process makes it), opening them fails with ENXIO and file descriptor 0 is read instead. */
const STDIN_PATHS = new Set(['/dev/stdin', '/dev/fd/0', '/proc/self/fd/0']);

interface Source {
  read(buf: Buffer, offset: number, length: number): Promise<number>;
  close(): Promise<void>;
}

/** Reads a file front to back from the current position, or, given `start`, from that byte offset on (a regular file). */
function fileSource(fh: FileHandle, start?: number): Source {
  let pos = start ?? null;
  return {
    read: async (buf, offset, length) => {
      const n = (await fh.read(buf, offset, length, pos)).bytesRead;
      if (pos !== null) pos += n;
      return n;
    },
    close: () => fh.close(),
  };
}

const stdinSource: Source = {
  read: (buf, offset, length) => new Promise((resolve, reject) => read(0, buf, offset, length, null, (err, n) => (err ? reject(err) : resolve(n)))),
  close: async () => undefined,
};

/** `src`, telling `onBytes` how many bytes each read got (before any decompression: progress against the file's size). */
function counting(src: Source, onBytes?: (n: number) => void): Source {
  if (!onBytes) return src;
  return {
    read: async (buf, offset, length) => {
      const n = await src.read(buf, offset, length);
      onBytes(n);
      return n;
    },
    close: () => src.close(),
  };
}

/**
 * A source that reads gzip-compressed data (RFC 1952) from `raw` when it starts with the gzip magic
 * bytes 1f 8b, and passes anything else through unchanged. Text never starts with byte 0x1f (a control
 * character no header holds), so the test cannot mistake one for the other, and it works on pipes
 * (nothing is read twice). Concatenated gzip members are read one after another, as gunzip does.
 * `onGzip` is told when the data turn out to be compressed.
 */
function sniffingSource(raw: Source, onGzip: () => void): Source {
  let mode: 'unknown' | 'plain' | 'gzip' = 'unknown';
  let head: Buffer | undefined;
  let pending: Buffer | undefined;
  let chunks: AsyncIterator<Buffer> | undefined;
  let failure: unknown;
  const startGzip = (first: Buffer) => {
    const z = createGunzip();
    // feed the compressed bytes in, with back-pressure; a read error ends the stream with that error
    void (async () => {
      try {
        z.write(first);
        for (;;) {
          const b = Buffer.allocUnsafe(1 << 20);
          const n = await raw.read(b, 0, b.length);
          if (n === 0) break;
          if (!z.write(b.subarray(0, n))) await once(z, 'drain');
        }
        z.end();
      } catch (err) {
        failure = err;
        z.destroy(err as Error);
      }
    })();
    chunks = (z as AsyncIterable<Buffer>)[Symbol.asyncIterator]();
  };
  return {
    async read(buf, offset, length) {
      if (mode === 'unknown') {
        const b = Buffer.allocUnsafe(Math.max(2, length));
        let n = 0;
        // two bytes decide; a pipe may give one at a time
        while (n < 2) {
          const k = await raw.read(b, n, b.length - n);
          if (k === 0) break;
          n += k;
        }
        head = b.subarray(0, n);
        if (n >= 2 && head[0] === 0x1f && head[1] === 0x8b) {
          mode = 'gzip';
          onGzip();
          startGzip(Buffer.from(head));
          head = undefined;
        } else mode = 'plain';
      }
      if (mode === 'plain') {
        if (head && head.length > 0) {
          const k = Math.min(length, head.length);
          head.copy(buf, offset, 0, k);
          head = head.subarray(k);
          return k;
        }
        return raw.read(buf, offset, length);
      }
      while (!pending || pending.length === 0) {
        let r: IteratorResult<Buffer>;
        try {
          r = await chunks!.next();
        } catch (err) {
          throw failure ?? gzipError(err);
        }
        if (r.done) return 0;
        pending = r.value;
      }
      const k = Math.min(length, pending.length);
      pending.copy(buf, offset, 0, k);
      pending = pending.subarray(k);
      return k;
    },
    close: () => raw.close(),
  };
}

/** A zlib failure: the compressed data are damaged or cut short. */
function gzipError(err: unknown): TidemarkError {
  const why = (err as { code?: string })?.code === 'Z_BUF_ERROR' ? 'it ends before its compressed data do (cut short)' : 'its compressed data are damaged';
  return new TidemarkError('EVENTS_FORMAT', `the file is gzip-compressed, but ${why}: ${(err as Error)?.message ?? err}`, {}, 'Check the file (gzip -t FILE), or export it again');
}

/** The error for a failed open or read of an events file: missing, a directory, unreadable. */
export function fileError(err: unknown, file: string): TidemarkError {
  if (err instanceof TidemarkError) return err;
  const code = (err as { code?: string })?.code;
  switch (code) {
    case 'ENOENT':
      return new TidemarkError('FILE_NOT_FOUND', 'no such file', { file }, 'Check the path given to --events');
    case 'ENOTDIR':
      return new TidemarkError('FILE_NOT_FOUND', 'no such file (a part of the path is not a folder)', { file }, 'Check the path given to --events');
    case 'EISDIR':
      return new TidemarkError('FILE_UNREADABLE', 'this is a folder, not an events file', { file }, 'Give the path of a CSV or NDJSON file inside it');
    case 'EACCES':
    case 'EPERM':
      return new TidemarkError('FILE_UNREADABLE', 'permission denied: the file cannot be read', { file }, 'Check the file\'s permissions');
    default:
      return new TidemarkError('FILE_UNREADABLE', `the file cannot be read (${code ?? 'unknown error'})`, { file }, 'Check the path given to --events');
  }
}

/**
 * A file read front to back into `buf`. `buf[0, end)` holds unread-by-the-caller bytes; `base` is the
 * file offset of `buf[0]`. {@link refill} keeps the bytes from a position on and reads more after them.
 */
export class ChunkReader {
  buf: Buffer;
  end = 0;
  base = 0;
  eof = false;
  /** True when the file turned out gzip-compressed (at the first read): offsets then count decompressed bytes. */
  gzip = false;
  /** The size in bytes of a regular file (undefined for a FIFO, a socket, a device or compressed data), at opening. */
  fileSize: number | undefined;
  /** The open handle of a file (undefined for descriptor 0), for positional look-ups ({@link lineStartAfter}). */
  private handle: FileHandle | undefined;

  private constructor(private readonly src: Source, readonly file: string, size: number) {
    this.buf = Buffer.allocUnsafe(Math.max(16, size));
  }

  /**
   * Open `file` for reading with a buffer of `size` bytes. `start`: read a regular file from that byte
   * offset on (a later part of a file, read on another thread); `base` then counts from the file's start.
   */
  static async open(file: string, size: number, start?: number, onBytes?: (n: number) => void): Promise<ChunkReader> {
    let fh: FileHandle;
    try {
      fh = await open(file, 'r');
    } catch (err) {
      if ((err as { code?: string })?.code === 'ENXIO' && STDIN_PATHS.has(file)) return ChunkReader.over(counting(stdinSource, onBytes), file, size, undefined, undefined);
      throw fileError(err, file);
    }
    let regular: number | undefined;
    try {
      const st = await fh.stat();
      if (st.isDirectory()) throw fileError({ code: 'EISDIR' }, file);
      if (st.isFile()) regular = st.size;
    } catch (err) {
      await fh.close();
      throw fileError(err, file);
    }
    return ChunkReader.over(counting(fileSource(fh, start), onBytes), file, size, start, fh, regular);
  }

  /** A reader over a source (a part of a file from `start` is never compressed: only whole files are split). */
  private static over(src: Source, file: string, size: number, start: number | undefined, fh: FileHandle | undefined, regular?: number): ChunkReader {
    let r: ChunkReader | undefined;
    const source = start === undefined ? sniffingSource(src, () => {
      // compressed data cannot be split at a byte offset, and offsets count decompressed bytes
      r!.fileSize = undefined;
      r!.handle = undefined;
      r!.gzip = true;
    }) : src;
    r = new ChunkReader(source, file, size);
    r.base = start ?? 0;
    r.fileSize = regular;
    r.handle = fh;
    return r;
  }

  /**
   * Move `buf[from, end)` to the front and read until the buffer is full or the input ends. The buffer
   * doubles when the kept bytes fill more than half of it, so every refill reads at least as many new
   * bytes as it keeps, and a caller that scans the kept bytes again does linear work in all (a pipe
   * returns little at a time, hence the filling). Callers bound what they keep. Returns the bytes kept.
   */
  async refill(from: number): Promise<number> {
    const kept = this.end - from;
    if (kept > 0 && from > 0) this.buf.copyWithin(0, from, this.end);
    this.base += from;
    this.end = kept;
    if (kept > this.buf.length / 2) {
      const bigger = Buffer.allocUnsafe(this.buf.length * 2);
      this.buf.copy(bigger, 0, 0, kept);
      this.buf = bigger;
    }
    while (!this.eof && this.end < this.buf.length) {
      let n: number;
      try {
        n = await this.src.read(this.buf, this.end, this.buf.length - this.end);
      } catch (err) {
        if (err instanceof TidemarkError && err.where.file === undefined) throw new TidemarkError(err.code, err.message, { file: this.file }, err.hint);
        throw fileError(err, this.file);
      }
      if (n === 0) this.eof = true;
      this.end += n;
    }
    return kept;
  }

  /**
   * The offset just past the first line feed at or after byte `at` of a regular file, or undefined when
   * there is none: a line start near `at`, where a later part of the file can be read from. Reads with
   * positions, leaving the front-to-back reading alone.
   */
  async lineStartAfter(at: number): Promise<number | undefined> {
    if (!this.handle) return undefined;
    // a whole offset: given a fraction, the read below reads at the file's current position (moving it
    // under the front-to-back reading)
    at = Math.max(0, Math.floor(at));
    const win = Buffer.allocUnsafe(64 * 1024);
    // a line is at most 1 MiB (limits.ts), so a line feed turns up within a few windows or never
    for (let pos = at; pos < at + 4 * (1 << 20); pos += win.length) {
      const { bytesRead } = await this.handle.read(win, 0, win.length, pos);
      if (bytesRead === 0) return undefined;
      const k = win.subarray(0, bytesRead).indexOf(10);
      if (k >= 0) return pos + k + 1;
    }
    return undefined;
  }

  async close(): Promise<void> {
    await this.src.close();
  }
}
