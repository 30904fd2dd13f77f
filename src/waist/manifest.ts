/**
 * The waist manifest: what a waist folder holds and under which rules it was made. Validated with
 * zod on reading; exported as JSON Schema (`tidemark waist schema`) so that a waist can be built
 * outside tidemark (for example by the SQL that `tidemark sql` prints).
 */
import { z } from 'zod';

export const WAIST_FORMAT = 'tidemark-waist';
/** The format version this code writes and reads. A reader refuses any other. */
export const WAIST_VERSION = 1;

const count = z.number().int().min(0);
const label = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'a period label is a date YYYY-MM-DD');

export const stateInfoSchema = z.strictObject({
  name: z.string().min(1).describe('State name, as in the tables.'),
  active: z.boolean().describe('Whether a user in this state was active in the period.'),
  role: z.enum(['arrival', 'continuing', 'return', 'lapse', 'exit']).describe('What the state means in the lifecycle.'),
  label: z.string().min(1).describe('Plural noun for users in this state, used in sentences.'),
  colour: z.string().regex(/^#[0-9A-Fa-f]{6}$/).describe('Chart colour.'),
  definition: z.string().min(1).describe('One sentence: when a user is in this state.'),
});

export const rowAccountSchema = z
  .strictObject({
    read: count,
    used: count,
    notKeyEvent: count,
    afterRange: count,
    partial: count.describe('Rows of an incomplete last period left out (0 in a waist; set when an analysis leaves it out).'),
    rejected: z.record(z.string(), count),
    lines: z.strictObject({ read: count, header: count, blank: count, records: count, rejected: count }).optional(),
  })
  .describe('Where every input row went (see README, "Row accounting").');

export const waistManifestSchema = z.strictObject({
  format: z.literal(WAIST_FORMAT),
  version: z.number().int(),
  rules: z.strictObject({
    name: z.string().nullable(),
    version: z.string().nullable(),
    grain: z.enum(['day', 'week', 'month']),
    weekStart: z.string(),
    timezone: z.string(),
    lapseLimit: count,
    minEvents: count,
    keyEvents: z.array(z.string()).nullable(),
    tenureEdges: z.array(count).min(1),
    tenureLabels: z.array(z.string()).min(1),
    warmup: count,
    minCell: count,
    splits: z.array(z.strictObject({ state: z.string(), atLeast: count, names: z.tuple([z.string(), z.string()]), labels: z.tuple([z.string(), z.string()]).optional() })),
  }),
  states: z.array(stateInfoSchema).min(2),
  engine: z.strictObject({ name: z.string().min(1), version: z.string() }),
  periods: z.array(label).min(1),
  rows: rowAccountSchema,
  rowsInLastPeriod: count.describe('Used rows whose period is the last one (for leaving out an incomplete last period).'),
  lastPeriod: z.strictObject({ label, coverage: z.number().min(0).max(1), complete: z.boolean() }),
  users: count,
  events: z.array(z.strictObject({ name: z.string(), rows: count, key: z.boolean() })),
  attributes: z.array(z.strictObject({ name: z.string(), values: count })),
  by: z.string().nullable().describe('The attribute of the attribute splits, or null.'),
  byPerPerson: z.boolean().describe('Whether that attribute holds nearly one value per user: sentences then never name its values.'),
  warnings: z.array(z.string()).describe('Warnings about the data, one sentence each (rows that stretch the range far beyond the bulk).'),
});

export type WaistManifest = z.output<typeof waistManifestSchema>;
export type StateInfo = z.output<typeof stateInfoSchema>;

/** JSON Schema (draft 2020-12) of manifest.json. */
export function waistManifestJsonSchema(): Record<string, unknown> {
  const schema = z.toJSONSchema(waistManifestSchema, { io: 'input', unrepresentable: 'any' }) as Record<string, unknown>;
  return { $id: 'https://tidemark.invalid/waist-manifest.schema.json', title: 'tidemark waist manifest', ...schema };
}

/** Plural nouns of the states for sentences, by state name. */
export function stateLabelsOf(states: readonly StateInfo[]): Record<string, string> {
  return Object.fromEntries(states.map((s) => [s.name, s.label]));
}

/** The state that has `role` (a waist has one arrival, one lapse and one exit state). */
export function stateWithRole(states: readonly StateInfo[], role: StateInfo['role']): string {
  const s = states.find((x) => x.role === role);
  if (!s) throw new Error(`no state has the role ${role}`);
  return s.name;
}
