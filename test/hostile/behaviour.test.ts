/**
 * The hostile-input corpus for the behaviour commands (inspect, early, habits, rfm, grain): control
 * codes in event names and column names, values that are not numbers, an empty log, and a log
 * stretched over three centuries by two rows. Each ends in a result or one clean line.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

let c: ReturnType<typeof corpusDir>;
beforeAll(() => {
  c = corpusDir();
});
afterAll(() => c.done());

const rows = (n: number, f: (i: number) => string) => Array.from({ length: n }, (_, i) => f(i)).join('\n');

describe('behaviour commands on hostile input', () => {
  it('control codes and bidi overrides in event names and a column name never reach the terminal raw', async () => {
    const f = c.file('ctl.csv', `user_id,timestamp,event,"e\u001b[31mmail"\n${rows(60, (i) => `m${i % 30},2026-03-${String(2 + (i % 20)).padStart(2, '0')}T10:00:00Z,"book\u001b[2J\u202eing",x${i % 30}@example.org`)}\n`);
    for (const cmd of ['inspect', 'early', 'habits', 'rfm', 'grain']) {
      const r = await run(cmd, '--events', f, '--early', '1', '--horizon', '1', '--span', '2', '--format', 'table');
      expectClean(r);
      // eslint-disable-next-line no-control-regex
      expect(r.out.replace(/\n/g, ''), `${cmd}: ${r.err}`).not.toMatch(/[\u0000-\u001f\u007f\u202e]/);
    }
    const i = await run('inspect', '--events', f);
    expect(i.out).toContain('\\u001b');
  });

  it.each(['NaN', 'Infinity', '1e999', '0x10', '12,50'])('a value column holding %s is refused naming the line', async (v) => {
    const f = c.file(`v${v.replace(/\W/g, '')}.csv`, `user_id,timestamp,event,fee\nm1,2026-03-02T10:00:00Z,booking,1.5\nm2,2026-03-03T10:00:00Z,booking,"${v}"\n`);
    const line = expectRefusal(await run('rfm', '--events', f, '--value-column', 'fee'), 1);
    expect(line).toMatch(/:3, column fee: .* is not a number/);
  });

  it('a header-only log is refused by every command', async () => {
    const f = c.file('empty.csv', 'user_id,timestamp,event\n');
    for (const cmd of ['inspect', 'early', 'habits', 'rfm', 'grain']) expectRefusal(await run(cmd, '--events', f), 1);
  });

  // the bound on time: a daily log over 300 years must not take minutes (timeout, not a timing assertion)
  it('a daily log stretched from 1900 to 2199 by two rows: inspect names them; rfm refuses or runs, quickly', async () => {
    const rules = c.file('daily.yaml', 'grain: day\nlapseLimit: 3\n');
    const f = c.file('far.csv', `user_id,timestamp,event\nm0,1900-01-02T10:00:00Z,booking\nm1,2199-12-30T10:00:00Z,booking\n${rows(4000, (i) => `m${i % 400},2026-03-${String(1 + (i % 28)).padStart(2, '0')}T10:00:00Z,booking`)}\n`);
    const i = await run('inspect', '--events', f, '--rules', rules, '--format', 'json');
    expect(i.code, i.err).toBe(0);
    const stray = JSON.parse(i.out).findings.find((x: { id: string }) => x.id === 'outlying-timestamps');
    expect(stray.data.map((x: { line: number }) => x.line)).toEqual([2, 3]);
    const r = await run('rfm', '--events', f, '--rules', rules);
    expect(r.code).toBe(1);
    expectRefusal(r, 1);
    const ok = await run('rfm', '--events', f, '--rules', rules, '--from', '2026-03-01', '--to', '2026-03-28', '--format', 'json');
    expect(ok.code, ok.err).toBe(0);
    for (const cmd of ['early', 'habits', 'grain']) expectClean(await run(cmd, '--events', f, '--rules', rules));
  }, 60_000);
});
