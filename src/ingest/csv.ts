/**
 * CSV events (RFC 4180: quoted fields, doubled quotes, embedded newlines, CRLF; a UTF-8 BOM is
 * dropped). Parsed by papaparse in streaming mode. Line numbers in messages are physical lines of the
 * file, found only when a message needs one.
 */
import { createReadStream } from 'node:fs';
import Papa from 'papaparse';
import { TidemarkError } from '../errors.js';
import type { EventLogBuilder } from './eventLog.js';
import { headerPlan } from './header.js';
import { lineOfRowAfter } from './lineAt.js';

const NONE: readonly string[] = [];

export async function readCsv(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, delimiter = ','): Promise<void> {
  let plan: ReturnType<typeof headerPlan> | undefined;
  let prevCursor = 0;
  let failure: unknown;
  await new Promise<void>((resolve, reject) => {
    const stream = createReadStream(file, { encoding: 'utf8' });
    stream.on('error', () => reject(new TidemarkError('FILE_NOT_FOUND', 'cannot read the events file', { file }, 'Check the path given to --events')));
    Papa.parse<string[]>(stream as unknown as File, {
      skipEmptyLines: false,
      delimiter,
      step: (res, parser) => {
        try {
          const start = prevCursor;
          prevCursor = res.meta.cursor;
          const data = res.data;
          if (!plan) {
            if (data.length > 0 && data[0].charCodeAt(0) === 0xfeff) data[0] = data[0].slice(1);
            plan = headerPlan(data, columns, needEvent, file);
            builder.startFile(file, plan.attributeNames, (ref) => lineOfRowAfter(file, ref));
            return;
          }
          if (data.length === 1 && data[0] === '') return builder.blank();
          if (res.errors.some((e) => e.code === 'MissingQuotes')) {
            return builder.reject('unclosed quote', file, start, undefined, undefined, 'Close the quoted field, or pass --skip-bad-rows');
          }
          if (data.length !== plan.width) {
            return builder.reject('wrong number of fields', file, start, undefined, `${data.length} fields, header has ${plan.width}`,
              'Quote fields that contain commas, or pass --skip-bad-rows');
          }
          const attrs = plan.attributePositions.length === 0 ? NONE : plan.attributePositions.map((p) => data[p]);
          builder.add(file, start, data[plan.user], data[plan.timestamp], plan.event >= 0 ? data[plan.event] : undefined, attrs);
        } catch (err) {
          failure = err;
          parser.abort();
        }
      },
      complete: () => (failure ? reject(failure) : resolve()),
      error: (err) => reject(new TidemarkError('FILE_UNREADABLE', err.message, { file })),
    });
  });
  if (!plan) throw new TidemarkError('EVENTS_FORMAT', 'the file is empty: it needs a header line', { file, line: 1 }, `Start the file with a header such as ${columns.user},${columns.timestamp},${columns.event}`);
}
