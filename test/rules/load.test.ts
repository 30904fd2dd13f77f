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
