/**
 * Rules files: the keys of the specification, their defaults, and refusals that name the file, the
 * line and the key (YAML 1.2 for the syntax).
 */
import { describe, expect, it } from 'vitest';
import { parseRules } from '../../src/rules/load.js';
import { TidemarkError, type ErrorCode } from '../../src/errors.js';

function refusal(text: string, code: ErrorCode): TidemarkError {
  let caught: unknown;
  try {
    parseRules(text, 'bookings-rules.yaml');
  } catch (e) {
    caught = e;
  }
  expect(caught, 'expected a TidemarkError').toBeInstanceOf(TidemarkError);
  const err = caught as TidemarkError;
  expect(err.code, err.message).toBe(code);
  expect(err.where.file).toBe('bookings-rules.yaml');
  expect(err.oneLine()).not.toMatch(/\n/);
  return err;
}

describe('parseRules', () => {
  it('fills the defaults of the specification: weekStart monday, timezone UTC, minEvents 1, warmup 0, every event counts', () => {
    const r = parseRules('grain: week\nlapseLimit: 2\n');
    expect(r).toMatchObject({ grain: 'week', weekStart: 'monday', timezone: 'UTC', lapseLimit: 2, warmup: 0 });
    expect(r.activity.minEvents).toBe(1);
    expect(r.activity.keyEvents).toBeUndefined();
    expect(r.columns).toEqual({ user: 'user_id', timestamp: 'timestamp', event: 'event' });
  });

  it('reads every key of the specification', () => {
    const r = parseRules(
      [
        'grain: month',
        'weekStart: sunday',
        'timezone: Asia/Kolkata',
        'activity:',
        '  keyEvents: [booking, tool_reservation]',
        '  minEvents: 3',
        'lapseLimit: 0',
        'warmup: 2',
        'columns: {user: member, timestamp: at, event: action}',
        '',
      ].join('\n'),
    );
    expect(r).toMatchObject({ grain: 'month', weekStart: 'sunday', timezone: 'Asia/Kolkata', lapseLimit: 0, warmup: 2 });
    expect(r.activity).toEqual({ keyEvents: ['booking', 'tool_reservation'], minEvents: 3 });
    expect(r.columns).toEqual({ user: 'member', timestamp: 'at', event: 'action' });
  });

  it('lapseLimit is required', () => {
    const err = refusal('grain: day\n', 'RULES_INVALID');
    expect(err.oneLine()).toMatch(/lapseLimit/);
  });

  it('an unknown key names its line and key, and suggests the near one', () => {
    const err = refusal('grain: day\nlapseLimit: 1\nweekstart: monday\n', 'RULES_UNKNOWN_KEY');
    expect(err.where).toMatchObject({ line: 3, key: 'weekstart' });
    expect(err.oneLine()).toMatch(/weekStart/);
  });

  it('an unknown nested key names its path', () => {
    const err = refusal('grain: day\nlapseLimit: 1\nactivity:\n  minEvent: 2\n', 'RULES_UNKNOWN_KEY');
    expect(err.where.line).toBe(4);
    expect(err.where.key).toMatch(/minEvent/);
    expect(err.oneLine()).toMatch(/minEvents/);
  });

  it('values out of range are refused: minEvents 0, lapseLimit −1, warmup 1.5, grain fortnight, an unknown zone', () => {
    expect(refusal('grain: day\nlapseLimit: 1\nactivity:\n  minEvents: 0\n', 'RULES_INVALID').where.key).toMatch(/minEvents/);
    expect(refusal('grain: day\nlapseLimit: -1\n', 'RULES_INVALID').where.key).toBe('lapseLimit');
    expect(refusal('grain: day\nlapseLimit: 1\nwarmup: 1.5\n', 'RULES_INVALID').where.key).toBe('warmup');
    expect(refusal('grain: fortnight\nlapseLimit: 1\n', 'RULES_INVALID').where.key).toBe('grain');
    expect(refusal('grain: day\nlapseLimit: 1\ntimezone: Mars/Olympus_Mons\n', 'RULES_INVALID').where).toMatchObject({ key: 'timezone', line: 3 });
    expect(refusal('grain: week\nweekStart: funday\nlapseLimit: 1\n', 'RULES_INVALID').where).toMatchObject({ key: 'weekStart', line: 2 });
  });

  it('YAML that does not parse is a syntax error with a line', () => {
    const err = refusal('grain: day\nlapseLimit: [1\n', 'RULES_SYNTAX');
    expect(err.where.line).toBeGreaterThanOrEqual(2);
  });
});
