/**
 * The rules schema: what a rules file may say, and what each key means.
 *
 * Rules are data. Nothing in a rules file is executed: there are no expressions, no code tags, and
 * every value is checked against this schema before use.
 */
import { z } from 'zod';
import { IANAZone } from 'luxon';
import { FIXED_UTC_ZONES } from '../periods/zone.js';
import { SPLITTABLE, STATES } from '../lifecycle/states.js';
import { WEEKDAYS } from '../periods/weekdays.js';

export const GRAINS = ['day', 'week', 'month'] as const;
export { WEEKDAYS };

export type Grain = (typeof GRAINS)[number];
export type Weekday = (typeof WEEKDAYS)[number];

/**
 * Upper bounds of the numeric keys. A period count beyond 100,000 (274 years of days) exceeds any
 * range tidemark reads (timestamps from 1900 to 2199), so it can only be a slip; the other bounds are
 * far beyond any sensible value. Each refusal names the key and its bound.
 */
export const RULES_BOUNDS = {
  /** Periods: lapseLimit, warmup and each tenure band edge. */
  periods: 100_000,
  /** activity.minEvents: key events in one period. */
  minEvents: 1_000_000,
  /** minCell: users in a cell. */
  minCell: 1_000_000,
  /** Edges in tenureBands. */
  tenureBands: 32,
} as const;

/**
 * A whole number with en-US thousands separators, as `toLocaleString('en-US')` writes it, without
 * loading ICU's number formatting at start-up (about 30 ms; this runs when the module loads).
 */
export const fmt = (n: number) => (Number.isSafeInteger(n) ? String(n).replace(/\B(?=(\d{3})+(?!\d))/g, ',') : n.toLocaleString('en-US'));

/** A whole number in [min, max]; every refusal (wrong type, NaN, Infinity, fraction, out of range) says so in one message. */
function wholeNumber(what: string, min: number, max: number, unit: string) {
  const message = `${what} must be a whole number from ${fmt(min)} to ${fmt(max)} ${unit}`;
  return z.number({ error: message }).int(message).min(min, message).max(max, message);
}

const eventName = z.string().min(1, 'an event name must not be empty');
const columnName = z.string().min(1, 'a column name must not be empty');

export const activitySchema = z
  .strictObject({
    keyEvents: z
      .array(eventName)
      .min(1, 'list at least one event name, or leave keyEvents out to count every event')
      .optional()
      .describe('Event names that count toward activity. Omitted: every event counts.'),
    minEvents: wholeNumber('minEvents', 1, RULES_BOUNDS.minEvents, 'events')
      .default(1)
      .describe('Key events a user needs in a period to be active in it.'),
  })
  .describe('What makes a user active in a period.');

export const columnsSchema = z
  .strictObject({
    user: columnName.default('user_id').describe('Column holding the user id.'),
    timestamp: columnName.default('timestamp').describe('Column holding the event time.'),
    event: columnName.default('event').describe('Column holding the event name.'),
  })
  .describe('Names of the input columns, when they differ from user_id, timestamp and event.');

const stateNameText = z
  .string()
  .regex(/^[a-z][a-z0-9_]{0,39}$/, 'a state name is 1 to 40 lower-case letters, digits or underscores, starting with a letter');

/** A split of an active state by key events in the period (see src/lifecycle/states.ts). */
export const splitSchema = z
  .strictObject({
    state: z.enum(SPLITTABLE as [string, ...string[]]).describe('The active state to split (not the arrival state).'),
    atLeast: wholeNumber('atLeast', 2, RULES_BOUNDS.minEvents, 'events').describe('Key events in the period from which a user is in the second sub-state.'),
    names: z.tuple([stateNameText, stateNameText]).describe('Names of the two sub-states: [fewer than atLeast, atLeast or more].'),
    labels: z.tuple([z.string().min(1).max(60), z.string().min(1).max(60)]).optional().describe('Plural nouns for sentences, [below, at or above]; default "<name> users".'),
  })
  .describe('Split an active state into two by how many key events a user had in the period.');

export const rulesSchema = z
  .strictObject({
    name: z.string().min(1).optional().describe('A short name for this rule set, shown in reports.'),
    version: z
      .union([z.string().min(1), z.number()])
      .transform(String)
      .optional()
      .describe('Version of this rule set; bump it whenever a change would reclassify users.'),
    description: z.string().optional().describe('Free text: when to use these rules.'),
    grain: z.enum(GRAINS).describe('Length of a period: day, week or month.'),
    weekStart: z.enum(WEEKDAYS).default('monday').describe('First day of a week (week grain only).'),
    timezone: z
      .string()
      .default('UTC')
      // UTC, the default, is known without asking luxon (whose first check loads the time zone data: tens of ms of start-up)
      .refine((tz) => FIXED_UTC_ZONES.has(tz) || IANAZone.isValidZone(tz), {
        message: 'not a known IANA time zone name (for example UTC, Europe/Berlin, America/Chicago)',
      })
      .describe('IANA time zone used to put timestamps into periods.'),
    activity: activitySchema.default({ minEvents: 1 }),
    lapseLimit: wholeNumber('lapseLimit', 0, RULES_BOUNDS.periods, 'periods')
      .describe('Consecutive inactive periods a user is still lapsing before becoming dormant.'),
    warmup: wholeNumber('warmup', 0, RULES_BOUNDS.periods, 'periods')
      .default(0)
      .describe(
        'Leading periods that are classified but left out of flows and retention (left-censoring guard).',
      ),
    tenureBands: z
      .array(wholeNumber('a tenure band edge', 0, RULES_BOUNDS.periods, 'periods'))
      .min(1, 'tenureBands needs at least one edge, 0')
      .max(RULES_BOUNDS.tenureBands, `tenureBands holds at most ${RULES_BOUNDS.tenureBands} edges`)
      .default([0, 1, 4, 12])
      .refine((b) => b[0] === 0 && b.every((v, i) => i === 0 || v > b[i - 1]), {
        message: 'tenureBands must start at 0 and increase, for example [0, 1, 4, 12]',
      })
      .describe('Lower edges of tenure bands, in periods since first active: [0, 1, 4, 12] gives 0, 1-3, 4-11, 12+.'),
    minCell: wholeNumber('minCell', 1, RULES_BOUNDS.minCell, 'users')
      .default(30)
      .describe('Cells with fewer users than this are flagged as small.'),
    columns: columnsSchema.default({ user: 'user_id', timestamp: 'timestamp', event: 'event' }),
    splits: z.array(splitSchema).max(SPLITTABLE.length).default([]).describe('Active states split by key events in the period; each at most once.'),
  })
  .superRefine((r, ctx) => {
    const taken = new Set<string>(STATES);
    r.splits.forEach((s, i) => {
      if (r.splits.findIndex((t) => t.state === s.state) !== i) ctx.addIssue({ code: 'custom', path: ['splits', i, 'state'], message: `${s.state} is split twice` });
      if (s.atLeast <= r.activity.minEvents) ctx.addIssue({ code: 'custom', path: ['splits', i, 'atLeast'], message: `atLeast must be more than activity.minEvents (${r.activity.minEvents}), or every active user is in the second sub-state` });
      s.names.forEach((n, j) => {
        if (taken.has(n)) ctx.addIssue({ code: 'custom', path: ['splits', i, 'names', j], message: `'${n}' is already a state name` });
        taken.add(n);
      });
    });
  })
  .describe('tidemark lifecycle rules.');

/** Validated rules, every default filled in. */
export type Rules = z.output<typeof rulesSchema>;
/** Rules as written in a file. */
export type RulesInput = z.input<typeof rulesSchema>;

/** JSON Schema (draft 2020-12) for editors, generated from the zod schema. */
export function rulesJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(rulesSchema, { io: 'input', unrepresentable: 'any' }) as Record<string, unknown>;
  return { $id: 'https://tidemark.invalid/rules.schema.json', title: 'tidemark rules', ...schema };
}
