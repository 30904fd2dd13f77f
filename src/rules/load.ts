/**
 * Load and validate a rules file: YAML → plain data → zod schema → {@link Rules}.
 *
 * Every problem becomes a TidemarkError naming the file, the line and the key, with a "did you mean"
 * for a misspelt key. YAML tags and anything else that could execute are refused.
 */
import { closeSync, openSync, readSync } from 'node:fs';
import { LineCounter, Parser, parseDocument, isAlias, isMap, isPair, isScalar, type Document, type Node } from 'yaml';
import { z } from 'zod';
import { TidemarkError, showValue, suggestion } from '../errors.js';
import { rulesSchema, type Rules } from './schema.js';

/**
 * Limits on the YAML itself, checked before it is composed (a rules file is a few hundred bytes and
 * nests three levels deep): its size, how deep it nests, and how many times aliases may be expanded
 * (an alias bomb expands a few lines into billions of nodes).
 */
export const RULES_TEXT_LIMITS = { bytes: 256 * 1024, depth: 32, aliases: 50 } as const;

/** Read and validate a rules file. Throws TidemarkError (FILE_NOT_FOUND, RULES_SYNTAX, RULES_INVALID, RULES_UNKNOWN_KEY). */
export function loadRulesFile(file: string): Rules {
  return parseRules(readBounded(file), file);
}

/** The file's text, reading at most the size limit and one byte more (so `/dev/zero` ends at once). */
function readBounded(file: string): string {
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch {
    throw new TidemarkError('FILE_NOT_FOUND', 'cannot read the rules file', { file }, 'Check the path given to --rules');
  }
  const max = RULES_TEXT_LIMITS.bytes;
  const buf = Buffer.alloc(max + 1);
  let got = 0;
  try {
    for (let n = 1; n > 0 && got <= max; got += n) n = readSync(fd, buf, got, max + 1 - got, null);
  } catch {
    throw new TidemarkError('FILE_UNREADABLE', 'cannot read the rules file (is it a folder?)', { file }, 'Give the path of a YAML file to --rules');
  } finally {
    closeSync(fd);
  }
  if (got > max) {
    throw new TidemarkError('RULES_INVALID', `the rules file is larger than ${max / 1024} KB`, { file }, 'A rules file is a few lines of YAML; check the path given to --rules');
  }
  return buf.toString('utf8', 0, got);
}

/** Validate rules given as YAML text. `file` is used in messages only. */
export function parseRules(text: string, file = '<rules>'): Rules {
  if (text.length > RULES_TEXT_LIMITS.bytes) {
    throw new TidemarkError('RULES_INVALID', `the rules text is longer than ${RULES_TEXT_LIMITS.bytes / 1024} KB`, { file }, 'A rules file is a few lines of YAML');
  }
  refuseDeepNesting(text, file);
  const lc = new LineCounter();
  // logLevel 'error': the library never prints a warning of its own (a key it would stringify is refused below)
  const doc = parseDocument(text, { lineCounter: lc, prettyErrors: true, uniqueKeys: true, customTags: [], logLevel: 'error' });
  const problem = doc.errors[0] ?? doc.warnings[0];
  if (problem) {
    const line = problem.linePos?.[0]?.line;
    const message = problem.message.split('\n')[0].replace(/ at line \d+, column \d+:?$/, '');
    throw new TidemarkError('RULES_SYNTAX', message, { file, line }, 'Fix the YAML syntax');
  }
  refuseTags(doc.contents, file, lc);
  let data: unknown;
  try {
    data = doc.toJS({ maxAliasCount: RULES_TEXT_LIMITS.aliases });
  } catch (e) {
    // the yaml library refuses an alias expanded too often (a "billion laughs" bomb) with a ReferenceError
    // (and an alias to an anchor it cannot resolve with another ReferenceError)
    if (!(e instanceof ReferenceError)) throw e;
    if (!/^Excessive alias count/.test(e.message)) throw new TidemarkError('RULES_SYNTAX', showValue(e.message, 120), { file }, 'Define an anchor (&name) before its alias (*name)');
    throw new TidemarkError('RULES_SYNTAX', `the YAML expands its aliases too often (more than ${RULES_TEXT_LIMITS.aliases} times)`, { file }, 'Write the values out; rules files need no anchors or aliases');
  }
  if (data === null || typeof data !== 'object' || Array.isArray(data)) {
    throw new TidemarkError('RULES_INVALID', 'a rules file must be a mapping of keys to values', { file, line: 1 }, 'Start from rules/weekly.yaml');
  }
  const result = rulesSchema.safeParse(data);
  if (result.success) return result.data;
  // An unknown key explains a "missing" one better (a misspelling), so report it first.
  const issues = [...result.error.issues].sort((a, b) => Number(b.code === 'unrecognized_keys') - Number(a.code === 'unrecognized_keys'));
  throw issueToError(issues[0], doc, lc, file);
}

/**
 * Refuse YAML nested deeper than the limit before it is composed: the composer recurses, and a few
 * thousand levels exhaust the stack. The concrete syntax tree from yaml's Parser (which keeps its own
 * stack) is walked iteratively; each level of nesting adds two levels to it (a collection and its item).
 */
function refuseDeepNesting(text: string, file: string): void {
  const limit = 2 * RULES_TEXT_LIMITS.depth + 4;
  const stack: [unknown, number][] = [];
  for (const token of new Parser().parse(text)) {
    stack.push([token, 0]);
    while (stack.length > 0) {
      const [t, d] = stack.pop()!;
      if (!t || typeof t !== 'object') continue;
      if (d > limit) {
        const offset = (t as { offset?: number }).offset;
        const line = typeof offset === 'number' ? text.slice(0, offset).split('\n').length : undefined;
        throw new TidemarkError('RULES_SYNTAX', `the YAML nests more than ${RULES_TEXT_LIMITS.depth} levels deep`, { file, line }, 'A rules file nests three levels at most; check the file');
      }
      const node = t as Record<string, unknown>;
      for (const k of ['items', 'start', 'key', 'sep', 'value', 'end']) {
        const v = node[k];
        if (Array.isArray(v)) for (const x of v) stack.push([x, d + 1]);
        else if (v && typeof v === 'object') stack.push([v, d + 1]);
      }
    }
  }
}

/** Refuse tags (rules are plain data) and keys that are lists or maps (a key is a name). */
function refuseTags(node: unknown, file: string, lc: LineCounter): void {
  if (!node || typeof node !== 'object') return;
  const n = node as Node & { tag?: string; items?: unknown[]; key?: unknown; value?: unknown };
  const lineAt = (x: Node) => (x.range ? lc.linePos(x.range[0]).line : undefined);
  if (n.tag && !n.tag.startsWith('tag:yaml.org,2002:')) {
    throw new TidemarkError('RULES_INVALID', `YAML tag ${showValue(n.tag)} is not allowed: rules are plain data`, { file, line: lineAt(n) }, 'Remove the tag');
  }
  if (isPair(node)) {
    if (node.key !== null && typeof node.key === 'object' && !isScalar(node.key) && !isAlias(node.key)) {
      throw new TidemarkError('RULES_INVALID', 'a key must be a name, not a list or a mapping', { file, line: lineAt(node.key as Node) }, 'Write keys as plain names, as in rules/weekly.yaml');
    }
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
    return new TidemarkError('RULES_INVALID', `'${showValue(typeof got === 'object' ? JSON.stringify(got) : got)}' is not one of ${options.join(', ')}`, { file, line, key }, hint && capital(hint));
  }
  if (issue.code === 'invalid_type' && doc.getIn(issue.path.map(String)) === undefined) {
    return new TidemarkError('RULES_INVALID', 'this key is required', { file, key }, `Add ${key}: (see rules/rules.schema.json)`);
  }
  return new TidemarkError('RULES_INVALID', message, { file, line, key }, 'See rules/rules.schema.json for what each key accepts');
}

function capital(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}
