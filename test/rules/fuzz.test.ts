/**
 * Fuzzing the rules loader: whatever the text, parseRules returns rules that the schema accepts and
 * the engine can compile, or throws a TidemarkError with one clean line; never another error, a
 * crash or a hang. Seeded (fast-check); inputs are kept small enough that each case takes
 * milliseconds, and each test's timeout bounds the whole run against a hang.
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { compilePlan } from '../../src/lifecycle/plan.js';
import { parseRules } from '../../src/rules/load.js';
import { rulesSchema } from '../../src/rules/schema.js';

const plans = new Map<number, number>();
/** The contract: valid, usable rules, or one clean TidemarkError line. */
function check(text: string): void {
  let rules;
  try {
    rules = parseRules(text, 'fuzz.yaml');
  } catch (e) {
    if (!(e instanceof TidemarkError)) throw new Error(`not a TidemarkError for ${JSON.stringify(text.slice(0, 200))}: ${String(e)}`);
    const line = e.oneLine();
    expect(line).not.toContain('\n');
    // eslint-disable-next-line no-control-regex
    expect(line).not.toMatch(/[\u0000-\u001f\u007f]/);
    return;
  }
  expect(rulesSchema.safeParse(rules).success).toBe(true);
  // the engine's first step accepts them (one plan per lapse limit: compiling is the slow part)
  if (!plans.has(rules.lapseLimit)) plans.set(rules.lapseLimit, compilePlan(rules).nextState.length);
  expect(plans.get(rules.lapseLimit)).toBeGreaterThan(0);
}

const SHIPPED = ['weekly', 'daily', 'monthly'].map((n) => readFileSync(`rules/${n}.yaml`, 'utf8'));

/** Values that have broken YAML loaders or schema checks somewhere. */
const HOSTILE_VALUES = [
  '1e9', '1e400', '-1e400', '.inf', '-.inf', '.nan', '.NaN', 'NaN', 'Infinity', '0x7fffffff', '0o777', '-0', '1_000',
  '9007199254740993', '123456789012345678901234567890', '2.5', '"2"', "'2'", '~', 'null', '', 'true', 'no', '[]', '{}',
  '[1, 2', '{a: 1', '[[[[[[1]]]]]]', '!!binary aGVsbG8=', '!!js/function "() => 1"', '!custom x', '!!set {a, b}',
  '!!omap [a: 1]', '&x 1', '*x', '*undefined', '<<: {lapseLimit: 3}', '"\\u0000\\u001b[31m"', '"\\x85"', '|\n  block',
  '>-\n  folded', '"x\\ny"', '2026-05-04', '12:30:00', '0.', '.5', '+1', '0b101', 'Mars/Olympus_Mons', 'x'.repeat(5000),
  '{__proto__: {lapseLimit: 1}}', '[&a [*a]]',
];
const HOSTILE_KEYS = ['__proto__', 'constructor', 'prototype', 'toString', '<<', '? [a, b]', '"lapse\\u0000Limit"', 'lapselimit', 'LapseLimit', '""', '1', 'null', '~'];

/** A structured mutation of a valid rules file, line-based. */
const mutation = fc.oneof(
  // set a key's value to a hostile one
  fc.record({ kind: fc.constant('value' as const), line: fc.nat(40), value: fc.constantFrom(...HOSTILE_VALUES) }),
  // add a line with a hostile key, at some indentation
  fc.record({ kind: fc.constant('key' as const), line: fc.nat(40), key: fc.constantFrom(...HOSTILE_KEYS), indent: fc.constantFrom(0, 2, 4), value: fc.constantFrom(...HOSTILE_VALUES) }),
  // duplicate, delete or move a line
  fc.record({ kind: fc.constantFrom('dup' as const, 'del' as const, 'swap' as const), line: fc.nat(40), other: fc.nat(40) }),
  // change a line's indentation
  fc.record({ kind: fc.constant('indent' as const), line: fc.nat(40), by: fc.integer({ min: -4, max: 6 }) }),
  // put random text somewhere
  fc.record({ kind: fc.constant('insert' as const), at: fc.nat(2000), text: fc.string({ maxLength: 8, unit: 'binary' }) }),
  // anchor a value and alias it elsewhere, possibly many times (an alias bomb in small)
  fc.record({ kind: fc.constant('alias' as const), line: fc.nat(40), other: fc.nat(40), times: fc.integer({ min: 1, max: 12 }) }),
  // nest a value in lists or maps
  fc.record({ kind: fc.constant('nest' as const), line: fc.nat(40), depth: fc.integer({ min: 1, max: 80 }), map: fc.boolean() }),
);
type Mutation = typeof mutation extends fc.Arbitrary<infer M> ? M : never;

function mutate(text: string, m: Mutation): string {
  const lines = text.split('\n');
  const at = (i: number) => i % lines.length;
  const valueOf = (line: string) => /^(\s*-?\s*[^:#]+:)\s*(.*)$/.exec(line);
  switch (m.kind) {
    case 'value': {
      const i = at(m.line);
      const kv = valueOf(lines[i]);
      if (kv) lines[i] = `${kv[1]} ${m.value}`;
      break;
    }
    case 'key':
      lines.splice(at(m.line), 0, `${' '.repeat(m.indent)}${m.key}: ${m.value}`);
      break;
    case 'dup':
      lines.splice(at(m.line), 0, lines[at(m.other)]);
      break;
    case 'del':
      lines.splice(at(m.line), 1);
      break;
    case 'swap': {
      const [a, b] = [at(m.line), at(m.other)];
      [lines[a], lines[b]] = [lines[b], lines[a]];
      break;
    }
    case 'indent': {
      const i = at(m.line);
      lines[i] = m.by >= 0 ? ' '.repeat(m.by) + lines[i] : lines[i].slice(Math.min(-m.by, lines[i].length - lines[i].trimStart().length));
      break;
    }
    case 'insert':
      return text.slice(0, m.at % (text.length + 1)) + m.text + text.slice(m.at % (text.length + 1));
    case 'alias': {
      const i = at(m.line);
      const kv = valueOf(lines[i]);
      if (kv && kv[2]) lines[i] = `${kv[1]} &v ${kv[2]}`;
      const j = at(m.other);
      const kw = valueOf(lines[j]);
      if (kw) lines[j] = `${kw[1]} [${Array(m.times).fill('*v').join(', ')}]`;
      break;
    }
    case 'nest': {
      const i = at(m.line);
      const kv = valueOf(lines[i]);
      if (kv) lines[i] = `${kv[1]} ${m.map ? '{k: '.repeat(m.depth) : '['.repeat(m.depth)}${kv[2] || '1'}${(m.map ? '}' : ']').repeat(m.depth)}`;
      break;
    }
  }
  return lines.join('\n');
}

// The whole run takes a few seconds; the timeouts only bound a hang (a case that never ends).
describe('the rules loader under fuzzing (seeded)', () => {
  it('any short text: rules or a TidemarkError', { timeout: 60_000 }, () => {
    fc.assert(fc.property(fc.string({ maxLength: 300, unit: 'binary' }), check), { seed: 20261, numRuns: 600 });
  });

  it('any bytes, read as UTF-8 (invalid sequences become U+FFFD): rules or a TidemarkError', { timeout: 60_000 }, () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 400 }), (bytes) => check(Buffer.from(bytes).toString('utf8'))), { seed: 20262, numRuns: 400 });
  });

  it('short texts over the YAML alphabet (indicators, quotes, anchors, tags): rules or a TidemarkError', { timeout: 60_000 }, () => {
    const yamlish = fc.string({ maxLength: 200, unit: fc.constantFrom(...'-:?[]{},&*!|>\'"%@`# \n\t0123456789.eE+~abgklnrwy'.split('')) });
    fc.assert(fc.property(yamlish, (t) => check(`grain: week\nlapseLimit: 2\n${t}`)), { seed: 20263, numRuns: 800 });
  });

  it('shipped rules files with structured mutations: rules or a TidemarkError', { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(fc.constantFrom(...SHIPPED), fc.array(mutation, { minLength: 1, maxLength: 4 }), (text, ms) => check(ms.reduce(mutate, text))),
      { seed: 20264, numRuns: 1500 },
    );
  });

  it('any JSON-like value written as YAML (wrong types, odd keys, huge and non-finite numbers): rules or a TidemarkError', { timeout: 60_000 }, async () => {
    const { stringify } = await import('yaml');
    const value = fc.anything({ maxDepth: 4, withNullPrototype: true, withBigInt: false, withMap: true, withSet: true, withBoxedValues: true, withObjectString: true });
    const doc = fc.record({ grain: fc.oneof(fc.constantFrom('day', 'week', 'month'), value), lapseLimit: fc.oneof(fc.double(), fc.integer(), value), extra: fc.dictionary(fc.string({ maxLength: 12 }), value, { maxKeys: 3 }) });
    fc.assert(
      fc.property(doc, (d) => {
        let text: string;
        try {
          text = stringify({ grain: d.grain, lapseLimit: d.lapseLimit, ...d.extra });
        } catch {
          return; // a value the YAML writer itself cannot write is not an input
        }
        check(text);
      }),
      { seed: 20265, numRuns: 500 },
    );
  });
});
