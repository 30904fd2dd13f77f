import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { loadRulesFile, parseRules } from '../../src/rules/load.js';
import { rulesJsonSchema } from '../../src/rules/schema.js';

function failure(text: string): TidemarkError {
  try {
    parseRules(text, 'r.yaml');
  } catch (e) {
    expect(e).toBeInstanceOf(TidemarkError);
    return e as TidemarkError;
  }
  throw new Error('expected the rules to be refused');
}

describe('parseRules', () => {
  it('fills every default from a minimal file', () => {
    const r = parseRules('grain: week\nlapseLimit: 2\n');
    expect(r).toMatchObject({ grain: 'week', weekStart: 'monday', timezone: 'UTC', lapseLimit: 2, warmup: 0, activity: { minEvents: 1 } });
    expect(r.activity.keyEvents).toBeUndefined();
    expect(r.columns).toEqual({ user: 'user_id', timestamp: 'timestamp', event: 'event' });
  });

  it('when a key is misspelt then it names file, line and key and suggests the right one', () => {
    const e = failure('grain: week\nlapseLimt: 2\n');
    expect(e.code).toBe('RULES_UNKNOWN_KEY');
    expect(e.where).toMatchObject({ file: 'r.yaml', line: 2, key: 'lapseLimt' });
    expect(e.oneLine()).toContain("did you mean 'lapseLimit'".replace('did', 'Did'));
  });

  it('when a nested key is misspelt then the key path is dotted', () => {
    const e = failure('grain: week\nlapseLimit: 2\nactivity:\n  minEvent: 2\n');
    expect(e.where).toMatchObject({ line: 4, key: 'activity.minEvent' });
    expect(e.hint).toContain('minEvents');
  });

  it('when an enum value is misspelt then it lists the choices and suggests one', () => {
    const e = failure('grain: weak\nlapseLimit: 2\n');
    expect(e.code).toBe('RULES_INVALID');
    expect(e.message).toContain('day, week, month');
    expect(e.hint).toContain("'week'");
  });

  it.each([
    ['lapseLimit: -1', 'lapseLimit'],
    ['lapseLimit: 1.5', 'lapseLimit'],
    ['lapseLimit: 2\nactivity:\n  minEvents: 0', 'activity.minEvents'],
    ['lapseLimit: 2\ntimezone: Mars/Olympus_Mons', 'timezone'],
    ['lapseLimit: 2\nweekStart: funday', 'weekStart'],
    ['lapseLimit: 2\nactivity:\n  keyEvents: []', 'activity.keyEvents'],
    ['lapseLimit: 2\ntenureBands: [1, 4]', 'tenureBands'],
  ])('refuses %j at key %s', (body, key) => {
    const e = failure(`grain: week\n${body}\n`);
    expect(e.where.key).toBe(key);
    expect(e.where.line).toBeGreaterThan(0);
  });

  it('when a required key is missing then it says so', () => {
    const e = failure('grain: week\n');
    expect(e.where.key).toBe('lapseLimit');
    expect(e.message).toContain('required');
  });

  it('refuses YAML tags: rules are data, nothing is executed', () => {
    expect(failure('grain: !!js/function "function () {}"\nlapseLimit: 2\n').code).toMatch(/RULES_(SYNTAX|INVALID)/);
    expect(failure('grain: !custom week\nlapseLimit: 2\n').code).toMatch(/RULES_(SYNTAX|INVALID)/);
  });

  it('refuses a file that is not a mapping, and broken YAML with its line', () => {
    expect(failure('- a\n- b\n').code).toBe('RULES_INVALID');
    const e = failure('grain: week\nlapseLimit: [2\n');
    expect(e.code).toBe('RULES_SYNTAX');
  });

  it('refuses duplicate keys', () => {
    expect(failure('grain: week\ngrain: day\nlapseLimit: 2\n').code).toBe('RULES_SYNTAX');
  });
});

describe('bounds on every numeric key', () => {
  // [key path, YAML at the bound, YAML one past it, the bound as the message words it]
  it.each([
    ['lapseLimit', 'lapseLimit: 100000', 'lapseLimit: 100001', '100,000 periods'],
    ['warmup', 'lapseLimit: 2\nwarmup: 100000', 'lapseLimit: 2\nwarmup: 100001', '100,000 periods'],
    ['activity.minEvents', 'lapseLimit: 2\nactivity: { minEvents: 1000000 }', 'lapseLimit: 2\nactivity: { minEvents: 1000001 }', '1,000,000 events'],
    ['minCell', 'lapseLimit: 2\nminCell: 1000000', 'lapseLimit: 2\nminCell: 1000001', '1,000,000 users'],
    ['tenureBands[1]', 'lapseLimit: 2\ntenureBands: [0, 100000]', 'lapseLimit: 2\ntenureBands: [0, 100001]', '100,000 periods'],
    ['tenureBands', `lapseLimit: 2\ntenureBands: [${Array.from({ length: 32 }, (_, i) => i).join(', ')}]`, `lapseLimit: 2\ntenureBands: [${Array.from({ length: 33 }, (_, i) => i).join(', ')}]`, '32 edges'],
  ])('%s: accepted at its bound, refused past it with the key and the bound named', (key, atBound, past, bound) => {
    expect(() => parseRules(`grain: day\n${atBound}\n`)).not.toThrow();
    const e = failure(`grain: day\n${past}\n`);
    expect(e.code).toBe('RULES_INVALID');
    expect(e.where.key).toBe(key);
    expect(e.message).toContain(bound);
  });

  it.each([
    ['1e9', 'a huge lapse limit'],
    ['1e400', 'a number beyond double range (YAML reads it as Infinity)'],
    ['.inf', 'YAML infinity'],
    ['.nan', 'YAML not-a-number'],
    ['-.inf', 'YAML minus infinity'],
    ['"2"', 'a string'],
    ['[2]', 'a list'],
  ])('refuses lapseLimit %s (%s) with a line naming the key', (value) => {
    const e = failure(`grain: week\nlapseLimit: ${value}\n`);
    expect(e.code).toBe('RULES_INVALID');
    expect(e.where).toMatchObject({ key: 'lapseLimit', line: 2 });
  });
});

describe('limits on the YAML itself', () => {
  it('refuses an alias bomb ("billion laughs") with a line naming the problem, at once', () => {
    const levels = ['a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]'];
    for (let i = 1; i < 9; i++) levels.push(`${'abcdefghi'[i]}: &${'abcdefghi'[i]} [${Array(9).fill(`*${'abcdefghi'[i - 1]}`).join(',')}]`);
    const e = failure(`${levels.join('\n')}\ngrain: week\nlapseLimit: 2\n`);
    expect(e.code).toBe('RULES_SYNTAX');
    expect(e.oneLine()).toMatch(/^r\.yaml: the YAML expands its aliases too often/);
  });

  it('refuses an alias without its anchor with the library’s reason', () => {
    expect(failure('grain: week\nlapseLimit: 2\nname: *nope\n').oneLine()).toMatch(/Unresolved alias.*nope/);
  });

  it('refuses a key that is a list, without the YAML library printing a warning', () => {
    expect(failure('grain: week\nlapseLimit: 2\n? [a, b]\n: 1\n').message).toContain('a key must be a name');
  });

  it('accepts a few aliases (YAML allows them)', () => {
    expect(parseRules('grain: &g week\nlapseLimit: 2\nname: *g\n').name).toBe('week');
  });

  it.each([
    ['flow lists', `name: ${'['.repeat(5000)}${']'.repeat(5000)}`],
    ['flow maps', `name: ${'{a: '.repeat(5000)}1${'}'.repeat(5000)}`],
    ['block lists on one line', `name:\n  ${'- '.repeat(5000)}x`],
    ['block lists, one a line', `name:\n${Array.from({ length: 300 }, (_, i) => `${' '.repeat(i + 1)}-`).join('\n')} x`],
    ['block maps', `name:\n${Array.from({ length: 300 }, (_, i) => `${' '.repeat(i + 1)}k:`).join('\n')} x`],
  ])('refuses %s nested hundreds or thousands deep before the parser recurses', (_what, body) => {
    const e = failure(`grain: week\nlapseLimit: 2\n${body}\n`);
    expect(e.code).toBe('RULES_SYNTAX');
    expect(e.message).toContain('nests more than 32 levels');
  });

  it('refuses text beyond 256 KB', () => {
    expect(failure(`grain: week\nlapseLimit: 2\ndescription: ${'x'.repeat(300_000)}\n`).message).toContain('256 KB');
  });
});

describe('loadRulesFile', () => {
  it('reads at most 256 KB of a file that never ends (/dev/zero) and refuses it', () => {
    expect(() => loadRulesFile('/dev/zero')).toThrow(/larger than 256 KB/);
  });

  it('refuses a folder with a line naming it', () => {
    expect(() => loadRulesFile('rules')).toThrow(TidemarkError);
  });

  it('refuses a missing file', () => {
    expect(() => loadRulesFile('rules/no-such.yaml')).toThrow(/cannot read the rules file/);
  });
});

describe('shipped rules', () => {
  it.each(['weekly', 'daily', 'monthly'])('rules/%s.yaml is valid', (name) => {
    expect(loadRulesFile(`rules/${name}.yaml`).name).toBe(name);
  });

  it('weekly.yaml is week, monday, UTC, every event, minEvents 1, lapseLimit 2', () => {
    const r = loadRulesFile('rules/weekly.yaml');
    expect(r).toMatchObject({ grain: 'week', weekStart: 'monday', timezone: 'UTC', lapseLimit: 2, activity: { minEvents: 1 } });
    expect(r.activity.keyEvents).toBeUndefined();
  });

  it('rules/rules.schema.json is the schema the code exports (run `npm run schema` after changing it)', () => {
    expect(JSON.parse(readFileSync('rules/rules.schema.json', 'utf8'))).toEqual(rulesJsonSchema());
  });

  it('the schema rejects unknown keys', () => {
    expect(rulesJsonSchema().additionalProperties).toBe(false);
  });
});
