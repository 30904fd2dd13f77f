/**
 * NDJSON events: one JSON object a line. Scalar fields other than the mapped columns are kept as
 * attributes (the set of attribute names is the union over the first 1,000 lines; a key first
 * seen later is ignored). Numbers are accepted for ids and epoch timestamps.
 */
import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';
import { TidemarkError } from '../errors.js';
import type { EventLogBuilder } from './eventLog.js';

const SAMPLE = 1000;

function text(v: unknown): string | undefined {
  if (v === null || v === undefined) return undefined;
  if (typeof v === 'string') return v;
  if (typeof v === 'number' || typeof v === 'boolean') return String(v);
  return JSON.stringify(v);
}

export async function readNdjson(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }): Promise<void> {
  const stream = createReadStream(file, { encoding: 'utf8' });
  const opened = new Promise<void>((resolve, reject) => {
    stream.once('open', () => resolve());
    stream.once('error', () => reject(new TidemarkError('FILE_NOT_FOUND', 'cannot read the events file', { file }, 'Check the path given to --events')));
  });
  await opened;
  const lines = createInterface({ input: stream, crlfDelay: Infinity });
  const pending: { line: number; obj: Record<string, unknown> }[] = [];
  let attrNames: string[] | undefined;
  let lineNo = 0;
  const mapped = new Set([columns.user, columns.timestamp, columns.event]);
  const flush = (line: number, obj: Record<string, unknown>) => {
    const attrs = (attrNames as string[]).map((n) => text(obj[n]) ?? '');
    builder.add(file, line, text(obj[columns.user]) ?? '', text(obj[columns.timestamp]) ?? '', text(obj[columns.event]), attrs);
  };
  const start = () => {
    const names = new Set<string>();
    for (const p of pending) for (const k of Object.keys(p.obj)) if (!mapped.has(k)) names.add(k);
    attrNames = [...names];
    builder.startFile(file, attrNames);
    for (const p of pending) flush(p.line, p.obj);
    pending.length = 0;
  };
  for await (const raw of lines) {
    lineNo++;
    const s = lineNo === 1 && raw.charCodeAt(0) === 0xfeff ? raw.slice(1) : raw;
    if (s.trim() === '') {
      builder.blank();
      continue;
    }
    let obj: unknown;
    try {
      obj = JSON.parse(s);
    } catch {
      builder.reject('not valid JSON', file, lineNo, undefined, s, 'Each line must be one JSON object, or pass --skip-bad-rows');
      continue;
    }
    if (obj === null || typeof obj !== 'object' || Array.isArray(obj)) {
      builder.reject('not valid JSON', file, lineNo, undefined, s, 'Each line must be one JSON object, or pass --skip-bad-rows');
      continue;
    }
    if (attrNames) flush(lineNo, obj as Record<string, unknown>);
    else {
      pending.push({ line: lineNo, obj: obj as Record<string, unknown> });
      if (pending.length >= SAMPLE) start();
    }
  }
  if (!attrNames) start();
}
