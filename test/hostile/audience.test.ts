/**
 * The hostile-input corpus for audience lists and the rules comparison: ids and values written as
 * spreadsheet formulas, control codes and bidirectional overrides in ids, values and column names,
 * key files that are devices, folders or empty, rules files that never end, a pipe given to rules
 * diff, an empty log. Each ends in a result or one clean line (harness.ts).
 */
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

let c: ReturnType<typeof corpusDir>;
beforeAll(() => {
  c = corpusDir();
});
afterAll(() => c.done());

const FORMULAS = ['=HYPERLINK("http://example.org","x")', '+SUM(A1)', '@cmd', '-2+3', '\tsneaky'];

describe('audience on hostile input', () => {
  it('ids and values that a spreadsheet would run are neutralised in CSV (OWASP "CSV Injection"), exact in JSON', async () => {
    const rows = FORMULAS.map((f, i) => `"${f.replace(/"/g, '""')}",2026-03-0${2 + i}T10:00:00Z,booking,"${f.replace(/"/g, '""')}"`);
    const file = c.file('formulas.csv', `user_id,timestamp,event,plan\n${rows.join('\n')}\n`);
    const daily = c.file('daily.yaml', 'grain: day\nlapseLimit: 2\n');
    const r = await run('audience', '--events', file, '--rules', daily, '--period', '2026-03-02', '--entered', 'fresh', '--where', `plan=${FORMULAS[0]}`);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const parsed = Papa.parse<string[]>(r.out.trimEnd()).data;
    expect(parsed[1][0]).toBe(`'${FORMULAS[0]}`);
    expect(parsed[1][5]).toBe(`'${FORMULAS[0]}`);
    // every formula start is neutralised ('-2+3' is no plain number, so it is too)
    for (const [i, f] of FORMULAS.entries()) {
      const one = await run('audience', '--events', file, '--rules', daily, '--period', `2026-03-0${2 + i}`, '--entered', 'fresh', '--include-partial');
      const cells = Papa.parse<string[]>(one.out.trimEnd()).data[1];
      expect(cells[0]).toBe(`'${f}`);
    }
    const j = await run('audience', '--events', file, '--rules', daily, '--period', '2026-03-02', '--entered', 'fresh', '--format', 'json');
    expect(JSON.parse(j.out).users[0].userId).toBe(FORMULAS[0]);
  });

  it('control codes and bidi overrides in ids, values and column names never reach the terminal raw', async () => {
    const file = c.file('ctl.csv', `user_id,timestamp,event,"pl\u001b[31man"\n"m\u001b[2J\u202e1",2026-03-02T10:00:00Z,booking,"pro\u0007"\n`);
    for (const format of ['table', 'csv', 'json']) {
      const r = await run('audience', '--events', file, '--period', '2026-03-02', '--entered', 'fresh', '--format', format);
      expectClean(r);
      expect(r.code, r.err).toBe(0);
      // eslint-disable-next-line no-control-regex
      if (format === 'table') expect(r.out.replace(/\n/g, ''), r.out).not.toMatch(/[\u0000-\u001f\u007f\u202e]/);
    }
    const w = await run('audience', '--events', file, '--period', '2026-03-02', '--entered', 'fresh', '--where', 'pl\u001b[31man=pro\u0007');
    expectClean(w);
    expect(w.code, w.err).toBe(0);
    expect(w.err).toContain('\\u001b[31m');
  });

  it('a header whose names need quoting is written quoted, and reads back', async () => {
    const file = c.file('quoted.csv', 'user_id,timestamp,event,"plan, ""tier"""\nm1,2026-03-02T10:00:00Z,booking,"a,b"\n');
    const r = await run('audience', '--events', file, '--period', '2026-03-02', '--entered', 'fresh');
    expect(Papa.parse<string[]>(r.out.trimEnd()).data).toEqual([
      ['user_id', 'state', 'previous_state', 'tenure', 'last_active', 'plan, "tier"'],
      ['m1', 'fresh', '', '0', '2026-03-02', 'a,b'],
    ]);
  });

  // a bound on a hang: /dev/zero as a key file must end at once (timeout, not a timing assertion)
  it('key files: /dev/zero, a folder, an empty file, /dev/null are refused in one line (exit 1)', async () => {
    const events = c.file('one.csv', 'user_id,timestamp,event\nm1,2026-03-02T10:00:00Z,booking\n');
    for (const key of ['/dev/zero', c.dir, c.file('empty.key', ''), '/dev/null']) {
      const line = expectRefusal(await run('audience', '--events', events, '--period', '2026-03-02', '--entered', 'fresh', '--pseudonymise', key), 1);
      expect(line).toMatch(/key/);
    }
  }, 20_000);

  it('hostile option values are echoed escaped on one line', async () => {
    const events = c.file('two.csv', 'user_id,timestamp,event\nm1,2026-03-02T10:00:00Z,booking\n');
    for (const args of [['--entered', `dor\u001b[31mmant${'x'.repeat(5000)}`], ['--entered', 'fresh', '--from-state', '\u202elapsing'], ['--entered', 'fresh', '--where', '=\n']]) {
      expectRefusal(await run('audience', '--events', events, '--period', '2026-03-02', ...args), 2);
    }
  });

  it('a header-only log is refused', async () => {
    expectRefusal(await run('audience', '--events', c.file('empty.csv', 'user_id,timestamp,event\n'), '--period', '2026-03-02', '--entered', 'fresh'), 1);
  });
});

describe('rules diff on hostile input', () => {
  it('a rules file that never ends (/dev/zero) or is a folder is refused in one line', async () => {
    const events = c.file('d.csv', 'user_id,timestamp,event\nm1,2026-03-02T10:00:00Z,booking\n');
    expectRefusal(await run('rules', 'diff', '/dev/zero', '/dev/zero', '--events', events), 1);
    expectRefusal(await run('rules', 'diff', c.dir, c.dir, '--events', events), 1);
  }, 20_000);

  it('/dev/stdin as events is refused: the events are read once for each rule set', async () => {
    const a = c.file('a.yaml', 'grain: week\nlapseLimit: 2\n');
    const line = expectRefusal(await run('rules', 'diff', a, a, '--events', '/dev/stdin', '--input-format', 'csv'), 2);
    expect(line).toMatch(/^tidemark: --events: '\/dev\/stdin' is not a regular file/);
  });

  it('a lapse limit at its bound against a small one runs (the lifecycle table does not grow with it)', async () => {
    const a = c.file('small.yaml', 'grain: day\nlapseLimit: 1\n');
    const b = c.file('huge.yaml', 'grain: day\nlapseLimit: 100000\n');
    const events = c.file('days.csv', `user_id,timestamp,event\n${Array.from({ length: 60 }, (_, i) => `m${i % 7},2026-03-${String(1 + (i % 28)).padStart(2, '0')}T10:00:00Z,booking`).join('\n')}\n`);
    const r = await run('rules', 'diff', a, b, '--events', events, '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    // with a lapse limit of 100,000 nobody is ever dormant: every dormant user-period under A is lapsing under B
    expect(j.changes.filter((x: { to: string }) => x.to === 'dormant')).toEqual([]);
  });
});
