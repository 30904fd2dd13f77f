/**
 * Read and check a waist folder. Every problem is a TidemarkError naming the file, the line and the
 * column, so that a waist built outside tidemark (by the printed SQL, say) can be fixed from the
 * message alone. The checks go beyond types: every count must agree with the identities the tables
 * obey (a period's users in a state all move somewhere in the next period; retention cells add up
 * to the state counts; a cohort's size is its arrivals).
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { TidemarkError, showValue } from '../errors.js';
import { WINDOW_MAX_AGE, type CohortRow, type DurationRow, type RetentionCell, type TransitionCounts, type WaistTables } from '../flows/types.js';
import { parseWaistCsv } from './csv.js';
import { WAIST_FORMAT, WAIST_VERSION, waistManifestSchema, type WaistManifest } from './manifest.js';
import { cohortRowsFrom, WAIST_TABLES, type TableName } from './tables.js';
import type { Waist } from './types.js';
import { SECTIONS_FILE } from './write.js';
import { canonicalDurations, canonicalSegmentCells } from './canonical.js';

function readText(dir: string, name: string): string {
  const file = join(dir, name);
  try {
    return readFileSync(file, 'utf8');
  } catch {
    throw new TidemarkError('FILE_NOT_FOUND', `the waist has no ${name}`, { file }, 'Give the folder that `tidemark waist` or the printed SQL wrote');
  }
}

/** Parse and check manifest.json. */
export function parseManifest(text: string, file: string): WaistManifest {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    throw new TidemarkError('INPUT_INVALID', `not valid JSON: ${showValue((e as Error).message, 120)}`, { file });
  }
  const d = doc as { format?: unknown; version?: unknown };
  if (!doc || typeof doc !== 'object' || d.format !== WAIST_FORMAT) {
    throw new TidemarkError('INPUT_INVALID', `not a tidemark waist manifest (format is ${showValue(JSON.stringify(d?.format ?? null))}, expected '${WAIST_FORMAT}')`, { file, key: 'format' });
  }
  if (typeof d.version !== 'number' || !Number.isInteger(d.version) || d.version < 1) {
    throw new TidemarkError('INPUT_INVALID', `unknown waist format version ${showValue(JSON.stringify(d.version ?? null))}`, { file, key: 'version' }, `This tidemark reads version ${WAIST_VERSION}`);
  }
  if (d.version > WAIST_VERSION) {
    throw new TidemarkError('INPUT_INVALID', `this waist is format version ${d.version}, from a newer tidemark; this one reads version ${WAIST_VERSION}`, { file, key: 'version' }, 'Upgrade tidemark, or rebuild the waist with this version');
  }
  if (d.version !== WAIST_VERSION) {
    throw new TidemarkError('INPUT_INVALID', `waist format version ${d.version} is not supported; this tidemark reads version ${WAIST_VERSION}`, { file, key: 'version' }, 'Rebuild the waist with this version');
  }
  const r = waistManifestSchema.safeParse(doc);
  if (!r.success) {
    const issue = r.error.issues[0];
    throw new TidemarkError('INPUT_INVALID', issue.message, { file, key: issue.path.map(String).join('.') || undefined });
  }
  const m = r.data;
  const names = m.states.map((s) => s.name);
  if (new Set(names).size !== names.length) throw new TidemarkError('INPUT_INVALID', 'a state is listed twice', { file, key: 'states' });
  for (const role of ['arrival', 'lapse', 'exit'] as const) {
    const n = m.states.filter((s) => s.role === role).length;
    if (n !== 1) throw new TidemarkError('INPUT_INVALID', `${n} states have the role ${role}; a waist has exactly one`, { file, key: 'states' });
  }
  if (!m.states.some((s) => s.role === 'arrival' && s.active)) throw new TidemarkError('INPUT_INVALID', 'the arrival state is not active', { file, key: 'states' });
  if (m.states.findIndex((s) => !s.active) < m.states.filter((s) => s.active).length) {
    throw new TidemarkError('INPUT_INVALID', 'active states must come first in the list of states', { file, key: 'states' });
  }
  for (let i = 1; i < m.periods.length; i++) {
    if (!(m.periods[i] > m.periods[i - 1])) throw new TidemarkError('INPUT_INVALID', `periods are not in increasing order at ${m.periods[i]}`, { file, key: `periods.${i}` });
  }
  if (m.rules.warmup >= m.periods.length) throw new TidemarkError('INPUT_INVALID', `a warm-up of ${m.rules.warmup} leaves no period`, { file, key: 'rules.warmup' });
  if (m.rules.tenureEdges.length !== m.rules.tenureLabels.length) throw new TidemarkError('INPUT_INVALID', 'tenureEdges and tenureLabels differ in length', { file, key: 'rules.tenureLabels' });
  if (m.lastPeriod.label !== m.periods[m.periods.length - 1]) throw new TidemarkError('INPUT_INVALID', 'lastPeriod.label is not the last period', { file, key: 'lastPeriod.label' });
  return m;
}

/** Reads one table's records as objects keyed by column; checks the header. */
class TableReader {
  readonly file: string;
  constructor(private readonly dir: string, private readonly name: TableName) {
    this.file = join(dir, WAIST_TABLES[name].file);
  }

  *rows(): Generator<{ line: number; get(col: string): string }> {
    const spec = WAIST_TABLES[this.name];
    const records = parseWaistCsv(readText(this.dir, spec.file), this.file);
    if (records.length === 0) throw new TidemarkError('INPUT_INVALID', 'the table has no header', { file: this.file, line: 1 }, `The header is ${spec.columns.join(',')}`);
    const header = records[0].fields.map((h) => h.trim().toLowerCase());
    for (const c of spec.columns) {
      if (!header.includes(c)) throw new TidemarkError('INPUT_INVALID', `the header has no column ${c}`, { file: this.file, line: 1 }, `The header is ${spec.columns.join(',')}`);
    }
    const unknown = header.find((h) => !(spec.columns as readonly string[]).includes(h));
    if (unknown !== undefined) throw new TidemarkError('INPUT_INVALID', `unknown column '${showValue(unknown)}'`, { file: this.file, line: 1 }, `The header is ${spec.columns.join(',')}`);
    const pos = new Map(header.map((h, i) => [h, i]));
    for (const rec of records.slice(1)) {
      if (rec.fields.length !== header.length) {
        throw new TidemarkError('INPUT_INVALID', `${rec.fields.length} fields, the header has ${header.length}`, { file: this.file, line: rec.line });
      }
      yield { line: rec.line, get: (col: string) => rec.fields[pos.get(col) as number] };
    }
  }
}

/** Read and check the waist in `dir`. */
export function readWaist(dir: string): Waist {
  let isDir = false;
  try {
    isDir = statSync(dir).isDirectory();
  } catch {
    throw new TidemarkError('FILE_NOT_FOUND', 'no such waist folder', { file: dir }, 'Give the folder that `tidemark waist --out DIR` wrote');
  }
  if (!isDir) throw new TidemarkError('INPUT_INVALID', 'a waist is a folder, not a file', { file: dir }, 'Give the folder that holds manifest.json');
  const manifestFile = join(dir, 'manifest.json');
  const m = parseManifest(readText(dir, 'manifest.json'), manifestFile);
  const states = m.states.map((s) => s.name);
  const stateIdx = new Map(states.map((s, i) => [s, i]));
  const activeCount = m.states.filter((s) => s.active).length;
  const P = m.periods.length;
  const periodIdx = new Map(m.periods.map((p, i) => [p, i]));
  const S = states.length;
  const warmup = m.rules.warmup;

  const cells = (t: TableReader) => {
    const num = (row: { line: number; get(c: string): string }, col: string): number => {
      const v = row.get(col);
      if (!/^\d+$/.test(v) || !Number.isSafeInteger(Number(v))) throw new TidemarkError('INPUT_INVALID', `'${showValue(v)}' is not a whole number ≥ 0`, { file: t.file, line: row.line, column: col });
      return Number(v);
    };
    const period = (row: { line: number; get(c: string): string }, col: string): number => {
      const v = row.get(col);
      const i = periodIdx.get(v);
      if (i === undefined) throw new TidemarkError('INPUT_INVALID', `'${showValue(v)}' is not one of the manifest's periods`, { file: t.file, line: row.line, column: col });
      return i;
    };
    const state = (row: { line: number; get(c: string): string }, col: string, activeOnly = false): number => {
      const v = row.get(col);
      const i = stateIdx.get(v);
      if (i === undefined) throw new TidemarkError('INPUT_INVALID', `'${showValue(v)}' is not one of the manifest's states (${states.join(', ')})`, { file: t.file, line: row.line, column: col });
      if (activeOnly && i >= activeCount) throw new TidemarkError('INPUT_INVALID', `'${v}' is not an active state`, { file: t.file, line: row.line, column: col });
      return i;
    };
    const bad = (row: { line: number }, message: string, column?: string) => new TidemarkError('INPUT_INVALID', message, { file: t.file, line: row.line, column });
    return { num, period, state, bad };
  };

  // state counts
  const stateCounts = Array.from({ length: P }, () => new Array<number>(S).fill(0));
  {
    const t = new TableReader(dir, 'stateCounts');
    const c = cells(t);
    const seen = new Set<number>();
    for (const row of t.rows()) {
      const p = c.period(row, 'period'), s = c.state(row, 'state');
      if (seen.has(p * S + s)) throw c.bad(row, 'this period and state appear twice');
      seen.add(p * S + s);
      stateCounts[p][s] = c.num(row, 'users');
    }
  }
  // arrivals, checked against the arrival states' counts
  const arrivalIdx = m.states.map((s, i) => (s.role === 'arrival' ? i : -1)).filter((i) => i >= 0);
  const arrivals = new Array<number>(P).fill(0);
  {
    const t = new TableReader(dir, 'arrivals');
    const c = cells(t);
    for (const row of t.rows()) arrivals[c.period(row, 'period')] += c.num(row, 'users');
    for (let p = 0; p < P; p++) {
      const inArrival = arrivalIdx.reduce((a, i) => a + stateCounts[p][i], 0);
      if (arrivals[p] !== inArrival) {
        throw new TidemarkError('INPUT_INVALID', `${m.periods[p]}: ${arrivals[p]} arrivals, but ${inArrival} users in arrival states in state_counts.csv`, { file: t.file });
      }
    }
  }
  // transitions
  const transitions: TransitionCounts[] = [];
  const pairIndex = new Map<number, TransitionCounts>();
  for (let p = warmup + 1; p < P; p++) {
    const tr: TransitionCounts = { from: m.periods[p - 1], to: m.periods[p], counts: Array.from({ length: S }, () => new Array<number>(S).fill(0)), fresh: arrivals[p] };
    transitions.push(tr);
    pairIndex.set(p, tr);
  }
  {
    const t = new TableReader(dir, 'transitions');
    const c = cells(t);
    for (const row of t.rows()) {
      const from = c.period(row, 'period_from'), to = c.period(row, 'period_to');
      if (to !== from + 1) throw c.bad(row, 'period_to is not the period after period_from', 'period_to');
      const tr = pairIndex.get(to);
      if (!tr) throw c.bad(row, `${m.periods[from]} is inside the warm-up of ${warmup} periods`, 'period_from');
      tr.counts[c.state(row, 'state_from')][c.state(row, 'state_to')] += c.num(row, 'users');
    }
    for (const [p, tr] of pairIndex) {
      for (let i = 0; i < S; i++) {
        const out = tr.counts[i].reduce((a, b) => a + b, 0);
        if (out !== stateCounts[p - 1][i]) throw new TidemarkError('INPUT_INVALID', `${tr.from} to ${tr.to}: ${out} users leave ${states[i]}, but ${stateCounts[p - 1][i]} were in it`, { file: t.file });
      }
      for (let j = 0; j < S; j++) {
        const into = tr.counts.reduce((a, row) => a + row[j], 0) + (arrivalIdx.includes(j) ? stateCounts[p][j] : 0);
        if (into !== stateCounts[p][j]) throw new TidemarkError('INPUT_INVALID', `${tr.from} to ${tr.to}: ${into} users reach ${states[j]}, but ${stateCounts[p][j]} are in it`, { file: t.file });
      }
    }
  }
  // retention cells
  const tenureCells: RetentionCell[] = [];
  const segmentCells: RetentionCell[] = [];
  {
    const t = new TableReader(dir, 'retentionCells');
    const c = cells(t);
    const bandIdx = new Map(m.rules.tenureLabels.map((b, i) => [b, i]));
    const keyed = new Map<string, { row: RetentionCell; p: number; s: number; b: number }>();
    for (const row of t.rows()) {
      const p = c.period(row, 'period_to');
      const s = c.state(row, 'state_from', true);
      const split = row.get('split');
      const segment = row.get('segment');
      const users = c.num(row, 'users'), retained = c.num(row, 'retained');
      if (retained > users) throw c.bad(row, `retained ${retained} is more than users ${users}`, 'retained');
      if (!pairIndex.has(p)) throw c.bad(row, `no counted transition into ${m.periods[p]}`, 'period_to');
      if (users === 0) continue;
      const cellRow: RetentionCell = { to: m.periods[p], state: states[s], segment, n: users, retained };
      if (split === 'tenure') {
        const b = bandIdx.get(segment);
        if (b === undefined) throw c.bad(row, `'${showValue(segment)}' is not a tenure band (${m.rules.tenureLabels.join(', ')})`, 'segment');
        const k = `t|${p}|${s}|${b}`;
        if (keyed.has(k)) throw c.bad(row, 'this cell appears twice');
        keyed.set(k, { row: cellRow, p, s, b });
      } else if (split === 'attribute') {
        if (m.by === null) throw c.bad(row, 'an attribute split, but the manifest names no attribute (by)', 'split');
        segmentCells.push(cellRow);
      } else throw c.bad(row, `split must be tenure or attribute, not '${showValue(split)}'`, 'split');
    }
    const sorted = [...keyed.values()].sort((x, y) => x.p - y.p || x.s - y.s || x.b - y.b);
    for (const x of sorted) tenureCells.push(x.row);
    // every active state's users at p − 1 are split over the bands; retained = moves into active states
    const sums = new Map<string, { n: number; r: number }>();
    for (const x of sorted) {
      const k = `${x.p}|${x.s}`;
      const v = sums.get(k) ?? { n: 0, r: 0 };
      v.n += x.row.n;
      v.r += x.row.retained;
      sums.set(k, v);
    }
    for (const [p, tr] of pairIndex) {
      for (let s = 0; s < activeCount; s++) {
        const v = sums.get(`${p}|${s}`) ?? { n: 0, r: 0 };
        const n = tr.counts[s].reduce((a, b) => a + b, 0);
        const r = tr.counts[s].slice(0, activeCount).reduce((a, b) => a + b, 0);
        if (v.n !== n || v.r !== r) {
          throw new TidemarkError('INPUT_INVALID', `tenure cells into ${tr.to} for ${states[s]} add up to ${v.n} users, ${v.r} retained; the transitions say ${n} and ${r}`, { file: t.file });
        }
      }
    }
  }
  // cohorts
  const activity: { cohort: string; age: number; active: number; last: number; before: number }[] = [];
  const windows: { cohort: string; from: number; to: number; users: number }[] = [];
  {
    const t = new TableReader(dir, 'cohortActivity');
    const c = cells(t);
    for (const row of t.rows()) {
      const k = c.period(row, 'cohort');
      if (k < warmup) throw c.bad(row, 'a cohort inside the warm-up', 'cohort');
      const age = c.num(row, 'age');
      if (k + age >= P) throw c.bad(row, `age ${age} is past the last period`, 'age');
      activity.push({ cohort: m.periods[k], age, active: c.num(row, 'active'), last: c.num(row, 'last_active'), before: c.num(row, 'last_active_before_final') });
    }
    const w = new TableReader(dir, 'cohortWindows');
    const cw = cells(w);
    for (const row of w.rows()) {
      const k = cw.period(row, 'cohort');
      const from = cw.num(row, 'age_from'), to = cw.num(row, 'age_to');
      if (to < from || k + to >= P) throw cw.bad(row, `ages ${from} to ${to} are not a window of observed ages`, 'age_to');
      windows.push({ cohort: m.periods[k], from, to, users: cw.num(row, 'users') });
    }
  }
  const cohorts: CohortRow[] = cohortRowsFrom(activity, windows, m.periods, WINDOW_MAX_AGE + 1);
  for (const r of cohorts) {
    const k = periodIdx.get(r.cohort) as number;
    if (r.size !== arrivals[k]) throw new TidemarkError('INPUT_INVALID', `cohort ${r.cohort} has ${r.size} members at age 0, but ${arrivals[k]} arrivals`, { file: join(dir, WAIST_TABLES.cohortActivity.file) });
  }
  // segment flows (present with an attribute split)
  const segStates = new Map<string, number[][]>();
  const segPairs = new Map<string, Map<number, number[][]>>();
  {
    const t = new TableReader(dir, 'segmentStateCounts');
    const c = cells(t);
    for (const row of t.rows()) {
      if (m.by === null) throw c.bad(row, 'segment counts, but the manifest names no attribute (by)', 'segment');
      const g = row.get('segment');
      let sc = segStates.get(g);
      if (!sc) segStates.set(g, (sc = Array.from({ length: P }, () => new Array<number>(S).fill(0))));
      sc[c.period(row, 'period')][c.state(row, 'state')] += c.num(row, 'users');
    }
    const tt = new TableReader(dir, 'segmentTransitions');
    const ct = cells(tt);
    for (const row of tt.rows()) {
      const g = row.get('segment');
      if (!segStates.has(g)) throw ct.bad(row, `segment '${showValue(g)}' has no state counts`, 'segment');
      const from = ct.period(row, 'period_from'), to = ct.period(row, 'period_to');
      if (to !== from + 1 || !pairIndex.has(to)) throw ct.bad(row, 'not a counted pair of consecutive periods', 'period_to');
      let pairs = segPairs.get(g);
      if (!pairs) segPairs.set(g, (pairs = new Map()));
      let counts = pairs.get(to);
      if (!counts) pairs.set(to, (counts = Array.from({ length: S }, () => new Array<number>(S).fill(0))));
      counts[ct.state(row, 'state_from')][ct.state(row, 'state_to')] += ct.num(row, 'users');
    }
    // the segments partition the users: their counts add up to the unsplit ones
    if (segStates.size > 0) {
      for (let p = 0; p < P; p++) for (let i = 0; i < S; i++) {
        const sum = [...segStates.values()].reduce((a, sc) => a + sc[p][i], 0);
        if (sum !== stateCounts[p][i]) throw new TidemarkError('INPUT_INVALID', `${m.periods[p]}, ${states[i]}: the segments hold ${sum} users, the state counts ${stateCounts[p][i]}`, { file: t.file });
      }
    }
  }
  // durations
  const durations: DurationRow[] = [];
  const segmentDurations: DurationRow[] = [];
  {
    const t = new TableReader(dir, 'durations');
    const c = cells(t);
    for (const row of t.rows()) {
      const split = row.get('split');
      const k = c.period(row, 'cohort');
      const duration = c.num(row, 'duration');
      const observed = c.num(row, 'observed');
      if (observed > 1) throw c.bad(row, 'observed must be 0 or 1', 'observed');
      if (k + duration >= P) throw c.bad(row, `duration ${duration} runs past the last period`, 'duration');
      const d: DurationRow = { group: row.get('group'), cohort: m.periods[k], duration, observed: observed as 0 | 1, users: c.num(row, 'users') };
      if (d.users === 0) continue;
      if (split === 'cohort') {
        if (d.group !== d.cohort) throw c.bad(row, 'for split cohort, group is the cohort', 'group');
        durations.push(d);
      } else if (split === 'attribute') {
        if (m.by === null) throw c.bad(row, 'an attribute split, but the manifest names no attribute (by)', 'split');
        segmentDurations.push(d);
      } else throw c.bad(row, `split must be cohort or attribute, not '${showValue(split)}'`, 'split');
    }
  }

  const tables: WaistTables = {
    states,
    activeStates: states.slice(0, activeCount),
    arrivalState: m.states.find((s) => s.role === 'arrival')!.name,
    exitState: m.states.find((s) => s.role === 'exit')!.name,
    periods: [...m.periods],
    warmup,
    stateCounts,
    transitions,
    tenureCells,
    cohorts,
    durations: canonicalDurations(durations),
  };
  if (m.by !== null) {
    tables.segmentCells = { by: m.by, cells: canonicalSegmentCells(segmentCells), perPerson: m.byPerPerson };
    tables.segmentDurations = { by: m.by, rows: canonicalDurations(segmentDurations), perPerson: m.byPerPerson };
    {
      const arrival = stateIdx.get(tables.arrivalState) as number;
      const segments = [...segStates.keys()].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)).map((g) => {
        const sc = segStates.get(g) as number[][];
        const pairs = segPairs.get(g) ?? new Map<number, number[][]>();
        const transitions: TransitionCounts[] = [...pairIndex.keys()].map((p) => ({ from: m.periods[p - 1], to: m.periods[p], counts: pairs.get(p) ?? Array.from({ length: S }, () => new Array<number>(S).fill(0)), fresh: sc[p][arrival] }));
        return { segment: g, stateCounts: sc, transitions };
      });
      tables.segmentTransitions = { by: m.by, perPerson: m.byPerPerson, segments };
    }
  }
  const sectionsFile = join(dir, SECTIONS_FILE);
  let sections: Waist['sections'];
  if (existsSync(sectionsFile)) {
    let doc: unknown;
    try {
      doc = JSON.parse(readFileSync(sectionsFile, 'utf8'));
    } catch (e) {
      throw new TidemarkError('INPUT_INVALID', `not valid JSON: ${showValue((e as Error).message, 120)}`, { file: sectionsFile });
    }
    const d = doc as { leaveOut?: unknown; keep?: unknown };
    if (!d || !Array.isArray(d.leaveOut) || !Array.isArray(d.keep)) throw new TidemarkError('INPUT_INVALID', 'sections.json must hold "leaveOut" and "keep" lists of report sections', { file: sectionsFile });
    sections = doc as Waist['sections'];
  }
  return sections ? { manifest: m, tables, sections } : { manifest: m, tables };
}
