import { TidemarkError, suggestion } from '../errors.js';

export interface HeaderPlan {
  width: number;
  user: number;
  timestamp: number;
  /** -1 when the file has no event column (allowed when every event counts). */
  event: number;
  attributeNames: string[];
  attributePositions: number[];
  /** Positions of every field a row uses (user, timestamp, event, attributes). */
  used: number[];
}

/** Find the mapped columns in a header row; the other columns are kept as attributes. */
export function headerPlan(header: string[], columns: { user: string; timestamp: string; event: string }, needEvent: boolean, file: string): HeaderPlan {
  const names = header.map((h) => h.trim());
  const seen = new Set<string>();
  for (const n of names) {
    if (seen.has(n)) throw new TidemarkError('EVENTS_FORMAT', `the header names column '${n}' twice`, { file, line: 1, column: n }, 'Give each column its own name');
    seen.add(n);
  }
  const find = (want: string, role: string, required: boolean): number => {
    const i = names.indexOf(want);
    if (i < 0 && required) {
      const dym = suggestion(want, names);
      throw new TidemarkError('EVENTS_FORMAT', `no '${want}' column (the ${role} column)`, { file, line: 1, column: want },
        dym ? `${dym.charAt(0).toUpperCase()}${dym.slice(1)} Map it with --${role}-column or the rules' columns.${role}` :
          `The header has: ${names.join(', ')}. Map yours with --${role}-column or the rules' columns.${role}`);
    }
    return i;
  };
  if (names.length === 1 && /[;\t|]/.test(names[0])) {
    const sep = names[0].includes(';') ? ';' : names[0].includes('\t') ? '\\t' : '|';
    throw new TidemarkError('EVENTS_FORMAT', `the header '${names[0].slice(0, 60)}' is one field: the file is not comma-separated`, { file, line: 1 }, `Pass --delimiter '${sep}'`);
  }
  const user = find(columns.user, 'user', true);
  const timestamp = find(columns.timestamp, 'timestamp', true);
  const event = find(columns.event, 'event', needEvent);
  const attributePositions = names.map((_, i) => i).filter((i) => i !== user && i !== timestamp && i !== event);
  const used = [user, timestamp, ...(event >= 0 ? [event] : []), ...attributePositions];
  return { width: names.length, user, timestamp, event, attributeNames: attributePositions.map((i) => names[i]), attributePositions, used };
}
