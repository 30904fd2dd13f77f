/**
 * Load and validate a rules file: YAML → plain data → zod schema → {@link Rules}.
 *
 * Every problem becomes a TidemarkError naming the file, the line and the key, with a "did you mean"
 * for a misspelt key. YAML tags and anything else that could execute are refused.
 */
import { readFileSync } from 'node:fs';
import { LineCounter, parseDocument, isMap, isPair, isScalar, type Document, type Node } from 'yaml';
import { z } from 'zod';
import { TidemarkError, suggestion } from '../errors.js';
import { rulesSchema, type Rules } from './schema.js';

/** Read and validate a rules file. Throws TidemarkError (FILE_NOT_FOUND, RULES_SYNTAX, RULES_INVALID, RULES_UNKNOWN_KEY). */
export function loadRulesFile(file: string): Rules {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch {
    throw new TidemarkError('FILE_NOT_FOUND', 'cannot read the rules file', { file }, 'Check the path given to --rules');
  }
  return parseRules(text, file);
}

/** Validate rules given as YAML text. `file` is used in messages only. */
export function parseRules(text: string, file = '<rules>'): Rules {
  const lc = new LineCounter();
  const doc = parseDocument(text, { lineCounter: lc, prettyErrors: true, uniqueKeys: true, customTags: [] });
  const problem = doc.errors[0] ?? doc.warnings[0];
  if (problem) {
    const line = problem.linePos?.[0]?.line;
    const message = problem.message.split('\n')[0].replace(/ at line \d+, column \d+:?$/, '');
    throw new TidemarkError('RULES_SYNTAX', message, { file, line }, 'Fix the YAML syntax');
  }
  refuseTags(doc.contents, file, lc);
  const data: unknown = doc.toJS({ maxAliasCount: 50 });
  if (data === null || typeof data !== 'object' || Array.isArray(data)) {
    throw new TidemarkError('RULES_INVALID', 'a rules file must be a mapping of keys to values', { file, line: 1 }, 'Start from rules/weekly.yaml');
  }
  const result = rulesSchema.safeParse(data);
  if (result.success) return result.data;
  // An unknown key explains a "missing" one better (a misspelling), so report it first.
  const issues = [...result.error.issues].sort((a, b) => Number(b.code === 'unrecognized_keys') - Number(a.code === 'unrecognized_keys'));
  throw issueToError(issues[0], doc, lc, file);
}

function refuseTags(node: unknown, file: string, lc: LineCounter): void {
  if (!node || typeof node !== 'object') return;
  const n = node as Node & { tag?: string; items?: unknown[]; key?: unknown; value?: unknown };
  if (n.tag && !n.tag.startsWith('tag:yaml.org,2002:')) {
    const line = n.range ? lc.linePos(n.range[0]).line : undefined;
    throw new TidemarkError('RULES_INVALID', `YAML tag ${n.tag} is not allowed: rules are plain data`, { file, line }, 'Remove the tag');
  }
  if (isPair(node)) {
    refuseTags(node.key, file, lc);
    refuseTags(node.value, file, lc);
  } else if (n.items) for (const item of n.items) refuseTags(item, file, lc);
}

function lineOf(doc: Document, path: PropertyKey[], lc: LineCounter, keyNode = false): number | undefined {
  const keys = path.map((p) => (typeof p === 'symbol' ? String(p) : p)) as (string | number)[];
  if (keyNode && keys.length > 0) {
    const parent = keys.length === 1 ? doc.contents : doc.getIn(keys.slice(0, -1), true);
    if (isMap(parent)) {
      const pair = parent.items.find((it) => isScalar(it.key) && it.key.value === keys[keys.length - 1]);
      const k = pair?.key as Node | undefined;
      if (k?.range) return lc.linePos(k.range[0]).line;
    }
  }
  for (let len = keys.length; len >= 0; len--) {
    const node = (len === 0 ? doc.contents : doc.getIn(keys.slice(0, len), true)) as Node | undefined;
    if (node && node.range) return lc.linePos(node.range[0]).line;
  }
  return undefined;
}

/** Known keys at a path of the schema, for "did you mean". */
function knownKeys(path: PropertyKey[]): string[] {
  let schema: z.ZodType = rulesSchema;
  for (const p of path) {
    schema = unwrap(schema);
    if (schema instanceof z.ZodObject) schema = (schema.shape as Record<string, z.ZodType>)[String(p)];
    else if (schema instanceof z.ZodArray) schema = schema.element as z.ZodType;
    if (!schema) return [];
  }
  schema = unwrap(schema);
  return schema instanceof z.ZodObject ? Object.keys(schema.shape) : [];
}

function unwrap(s: z.ZodType): z.ZodType {
  let cur: z.ZodType = s;
  for (let i = 0; i < 10; i++) {
    if (cur instanceof z.ZodDefault || cur instanceof z.ZodOptional) cur = cur.unwrap() as z.ZodType;
    else if (cur instanceof z.ZodPipe) cur = cur.in as z.ZodType;
    else break;
  }
  return cur;
}

function keyPath(path: PropertyKey[]): string {
  return path.map((p, i) => (typeof p === 'number' ? `[${p}]` : i === 0 ? String(p) : `.${String(p)}`)).join('');
}

function issueToError(issue: z.core.$ZodIssue, doc: Document, lc: LineCounter, file: string): TidemarkError {
  if (issue.code === 'unrecognized_keys') {
    const bad = issue.keys[0];
    const path = [...issue.path, bad];
    const hint = suggestion(bad, knownKeys(issue.path)) ?? `known keys here: ${knownKeys(issue.path).join(', ')}`;
    return new TidemarkError('RULES_UNKNOWN_KEY', `unknown key '${bad}'`, { file, line: lineOf(doc, path, lc, true), key: keyPath(path) }, capital(hint));
  }
  const key = keyPath(issue.path);
  const line = lineOf(doc, issue.path, lc);
  const message = issue.message;
  if (issue.code === 'invalid_value') {
    const got = doc.getIn(issue.path.map(String));
    const options = issue.values.map(String);
    const hint = typeof got === 'string' ? suggestion(got, options) : undefined;
    return new TidemarkError('RULES_INVALID', `'${String(got)}' is not one of ${options.join(', ')}`, { file, line, key }, hint && capital(hint));
  }
  if (issue.code === 'invalid_type' && doc.getIn(issue.path.map(String)) === undefined) {
    return new TidemarkError('RULES_INVALID', 'this key is required', { file, key }, `Add ${key}: (see rules/rules.schema.json)`);
  }
  return new TidemarkError('RULES_INVALID', message, { file, line, key }, 'See rules/rules.schema.json for what each key accepts');
}

function capital(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}
