/**
 * The data check, run before any analysis: is the log fit to be trusted? Each finding names what it
 * saw and what to do. Findings of kind `warning` change numbers downstream; `info` ones describe the log.
 *
 * Checks, and their rules:
 * - span, with outlying timestamps: the rule of ingest/extremes.ts (`rangeOutliers`), on key rows;
 * - missing data: periods inside the bulk with no event at all; days with no event on a weekday that
 *   has events in at least 3 of 4 of its weeks (so a regular closing day is not flagged); and periods
 *   with under half the median events of the 4 periods each side (a sudden drop);
 * - exact duplicate rows: the same user, instant (to the millisecond), event name and attributes;
 * - users with implausibly many events in a period: above the far-out fence of Tukey (1977,
 *   *Exploratory Data Analysis*: third quartile + 3 × interquartile range) on log10 of the events per
 *   active user-period, and at least 10 times the median;
 * - per-person columns: lifecycle/perPerson.ts;
 * - local time given as UTC: timestamps written as UTC (`Z`, `+00:00`, epoch) while the rules' zone is
 *   2 or more hours from UTC, whose quietest 6 hours fall in the night (centred 01:00–06:00) on the
 *   written clock but not in the rules' zone;
 * - the share of events per event name, and whether each counts as activity;
 * - the grain advisor's suggestion (grain/advise.ts).
 * No finding names a user id: users are counted, rows are named by file and line.
 */
import { showValue } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { TS_ZERO_OFFSET, rowPlace } from '../ingest/detail.js';
import { describeRow, rangeOutliers } from '../ingest/extremes.js';
import { perPersonColumns, PER_PERSON_FLAG } from '../lifecycle/perPerson.js';
import { isKeyRow, type Timelines } from '../lifecycle/timelines.js';
import { GRAIN_NOUN, periodKeyOfDay, periodLabel } from '../periods/calendar.js';
import { ZoneClock } from '../periods/zone.js';
import type { Rules } from '../rules/schema.js';
import { adviseGrain, type GrainAdvice } from '../grain/advise.js';
import { quantileInverseEcdf } from '../grain/advise.js';
import { plural } from '../text/plural.js';

const DAY = 86_400_000;

export type FindingId = 'span' | 'outlying-timestamps' | 'missing-data' | 'sudden-drop' | 'duplicates' | 'heavy-users' | 'per-person-columns' | 'local-time-as-utc' | 'event-names' | 'grain';

export interface CheckFinding {
  id: FindingId;
  kind: 'warning' | 'info';
  /** One sentence: what was seen. */
  text: string;
  /** What to do about it. */
  action: string;
  data: unknown;
}

export interface InspectOutput {
  rows: EventLog['rows'];
  findings: CheckFinding[];
  warnings: number;
}

const f = (n: number) => n.toLocaleString('en-US');
const pc = (x: number) => `${(x * 100).toFixed(1)}%`;
const day = (d: number) => new Date(d * DAY).toISOString().slice(0, 10);
const place = (log: EventLog, i: number) => {
  if (!log.detail) return log.files[0] ?? '';
  const p = rowPlace(log.files, log.detail, i);
  return `${p.file}:${p.line}`;
};

/** Runs of consecutive integers, as [first, last] pairs. */
function runs(v: number[]): [number, number][] {
  const out: [number, number][] = [];
  for (const x of v) {
    const last = out[out.length - 1];
    if (last && last[1] === x - 1) last[1] = x;
    else out.push([x, x]);
  }
  return out;
}

/**
 * The data check of a log read with detail.
 * @example a weekly log with a booking dated 1970, an email column and a week with no events gives
 *   the warnings outlying-timestamps, per-person-columns and missing-data.
 */
export function inspectLog(log: EventLog, t: Timelines, rules: Rules): InspectOutput {
  const findings: CheckFinding[] = [];
  const scheme = log.scheme;
  const noun = GRAIN_NOUN[scheme.grain];
  const keyOf = (ms: number) => periodKeyOfDay(Math.floor(ms / DAY), scheme);
  const keyRows = log.detail ? log.detail.keyRows : log.size;

  // span and outlying timestamps
  const o = rangeOutliers(log.extremes, keyRows, keyOf);
  const ex = log.extremes;
  const firstDay = Math.floor(ex.earliest[0].wallMs / DAY), lastDay = Math.floor(ex.latest[0].wallMs / DAY);
  findings.push({
    id: 'span', kind: 'info',
    text: `The key events run from ${day(firstDay)} to ${day(lastDay)} (${plural(keyOf(ex.latest[0].wallMs) - keyOf(ex.earliest[0].wallMs) + 1, noun)}, in ${rules.timezone}): ${plural(keyRows, 'key row')} of ${f(log.size)} kept, ${plural(log.users.length, 'user')}.`,
    action: 'Check that the span is the one you exported.',
    data: { first: day(firstDay), last: day(lastDay), keyRows, rows: log.size, users: log.users.length },
  });
  let bulkFrom = keyOf(ex.earliest[0].wallMs), bulkTo = keyOf(ex.latest[0].wallMs);
  if (o) {
    bulkFrom = o.bulk.fromKey;
    bulkTo = o.bulk.toKey;
    const rows = [...o.early, ...o.late];
    findings.push({
      id: 'outlying-timestamps', kind: 'warning',
      text: `${rows.length} row${rows.length > 1 ? 's lie' : ' lies'} far outside the bulk of the data (${periodLabel(bulkFrom, scheme)} to ${periodLabel(bulkTo, scheme)}): ${rows.map((r) => describeRow(r, (v) => showValue(v, 40))).join(', ')}.`,
      action: `Fix or drop ${rows.length > 1 ? 'these rows' : 'this row'} at the source, or pass ${[o.early.length ? `--from ${periodLabel(bulkFrom, scheme)}` : '', o.late.length ? `--to ${periodLabel(bulkTo, scheme)}` : ''].filter(Boolean).join(' ')} to analyse the bulk only.`,
      data: rows.map((r) => ({ file: r.file, line: r.lineOf(r.ref), timestamp: r.text })),
    });
  }

  // missing data: empty periods, empty days on usual weekdays, sudden drops (all rows, within the bulk)
  const bulkFirstDay = Math.max(firstDay, Math.floor(Math.min(...[...ex.earliest].filter((r) => keyOf(r.wallMs) >= bulkFrom).map((r) => r.wallMs)) / DAY));
  const bulkLastDay = Math.min(lastDay, Math.floor(Math.max(...[...ex.latest].filter((r) => keyOf(r.wallMs) <= bulkTo).map((r) => r.wallMs)) / DAY));
  const P = bulkTo - bulkFrom + 1, D = bulkLastDay - bulkFirstDay + 1;
  const perPeriod = new Float64Array(Math.max(0, P)), perDay = new Float64Array(Math.max(0, D));
  for (let i = 0; i < log.size; i++) {
    const d = Math.floor(log.wallMs[i] / DAY) - bulkFirstDay;
    if (d >= 0 && d < D) perDay[d]++;
    const k = log.period[i] - bulkFrom;
    if (k >= 0 && k < P) perPeriod[k]++;
  }
  const emptyPeriods: number[] = [];
  for (let k = 0; k < P; k++) if (perPeriod[k] === 0) emptyPeriods.push(k + bulkFrom);
  const weekdayWeeks = new Array<number>(7).fill(0), weekdayBusy = new Array<number>(7).fill(0);
  const wd = (d: number) => (((d + bulkFirstDay + 3) % 7) + 7) % 7;
  for (let d = 0; d < D; d++) {
    weekdayWeeks[wd(d)]++;
    if (perDay[d] > 0) weekdayBusy[wd(d)]++;
  }
  const usual = weekdayBusy.map((b, w) => weekdayWeeks[w] > 0 && b / weekdayWeeks[w] >= 0.75);
  const emptyDays: number[] = [];
  for (let d = 0; d < D; d++) if (perDay[d] === 0 && usual[wd(d)]) emptyDays.push(d + bulkFirstDay);
  if (emptyPeriods.length || emptyDays.length) {
    const dayRuns = runs(emptyDays).map(([a, b]) => (a === b ? day(a) : `${day(a)} to ${day(b)} (${b - a + 1} days)`));
    const periodRuns = runs(emptyPeriods).map(([a, b]) => (a === b ? periodLabel(a, scheme) : `${periodLabel(a, scheme)} to ${periodLabel(b, scheme)}`));
    findings.push({
      id: 'missing-data', kind: 'warning',
      text: `${emptyPeriods.length ? `${f(emptyPeriods.length)} ${noun}${emptyPeriods.length > 1 ? 's' : ''} inside the data hold no event at all (${periodRuns.slice(0, 10).join(', ')})` : `No ${noun} is empty`}${emptyDays.length ? `; ${f(emptyDays.length)} day${emptyDays.length > 1 ? 's' : ''} hold none on a weekday that usually has events (${dayRuns.slice(0, 10).join(', ')}${dayRuns.length > 10 ? ', …' : ''})` : ''}: most likely missing data, not a quiet spell.`,
      action: 'Re-export the missing days; until then, read flows into and out of them with care, or narrow the range with --from/--to.',
      data: { emptyPeriods: emptyPeriods.map((k) => periodLabel(k, scheme)), emptyDays: emptyDays.map(day) },
    });
  }
  const drops: { period: string; events: number; median: number }[] = [];
  for (let k = 0; k < P; k++) {
    if (perPeriod[k] === 0) continue;
    const around: number[] = [];
    for (let j = Math.max(0, k - 4); j <= Math.min(P - 1, k + 4); j++) if (j !== k) around.push(perPeriod[j]);
    if (around.length < 4 || k === P - 1) continue; // the last period may be incomplete
    around.sort((a, b) => a - b);
    const med = around.length % 2 ? around[around.length >> 1] : (around[around.length / 2 - 1] + around[around.length / 2]) / 2;
    if (perPeriod[k] < med / 2) drops.push({ period: periodLabel(k + bulkFrom, scheme), events: perPeriod[k], median: med });
  }
  if (drops.length) {
    findings.push({
      id: 'sudden-drop', kind: 'warning',
      text: `${f(drops.length)} ${noun}${drops.length > 1 ? 's hold' : ' holds'} under half the median events of the ${noun}s around ${drops.length > 1 ? 'them' : 'it'}: ${drops.slice(0, 10).map((d) => `${d.period} (${f(d.events)} against ${f(d.median)})`).join(', ')}.`,
      action: 'Check the export for a partial load or an outage; a real drop (a holiday, a closure) can stay, but say so when reading the flows.',
      data: drops,
    });
  }

  // exact duplicates: sort rows by (user, instant, event, attributes) and compare neighbours
  const order = Array.from({ length: log.size }, (_, i) => i);
  const ev = log.detail?.event;
  const cmp = (a: number, b: number) => {
    let c = log.user[a] - log.user[b] || log.wallMs[a] - log.wallMs[b] || (ev ? ev[a] - ev[b] : 0);
    for (let k = 0; c === 0 && k < log.attributes.length; k++) c = log.attributes[k].codes[a] - log.attributes[k].codes[b];
    return c;
  };
  order.sort((a, b) => cmp(a, b) || a - b);
  let dup = 0;
  const dupExamples: string[] = [];
  for (let j = 1; j < order.length; j++) {
    if (cmp(order[j - 1], order[j]) === 0) {
      dup++;
      if (dupExamples.length < 5) dupExamples.push(place(log, order[j]));
    }
  }
  findings.push(dup
    ? { id: 'duplicates', kind: 'warning', text: `${plural(dup, 'row')} (${pc(dup / log.size)}) ${dup === 1 ? 'repeats' : 'repeat'} an earlier row exactly (same user, time to the millisecond, event and attributes), e.g. ${dupExamples.join(', ')}.`, action: 'Remove the repeats at the source (a double load or a retried upload); they inflate event counts and can make a period active that was not.', data: { rows: dup, examples: dupExamples } }
    : { id: 'duplicates', kind: 'info', text: 'No row repeats another exactly.', action: 'Nothing to do.', data: { rows: 0, examples: [] } });

  // implausibly many events per user-period (key events of active periods)
  const counts = t.activeEvents;
  if (counts.length >= 20) {
    const logs = Float64Array.from(counts, (c) => Math.log10(c)).sort();
    const q1 = quantileInverseEcdf(logs, 0.25), q3 = quantileInverseEcdf(logs, 0.75);
    const medianCount = 10 ** quantileInverseEcdf(logs, 0.5);
    const fence = Math.max(10 ** (q3 + 3 * (q3 - q1)), 10 * medianCount);
    const heavyUsers = new Set<number>();
    let heavyPeriods = 0, max = 0;
    const examples: string[] = [];
    for (let u = 0; u < t.users; u++) {
      for (let a = t.activeStart[u]; a < t.activeStart[u + 1]; a++) {
        if (counts[a] <= fence) continue;
        heavyPeriods++;
        heavyUsers.add(u);
        max = Math.max(max, counts[a]);
        if (examples.length < 5) {
          const p = t.activePeriod[a];
          let k = t.rowStart[u];
          while (k < t.rowStart[u + 1] && !(log.period[t.order[k]] === p && isKeyRow(log, t.order[k]))) k++;
          examples.push(`${periodLabel(p, scheme)} (${plural(counts[a], 'event')}, first at ${place(log, t.order[k])})`);
        }
      }
    }
    if (heavyPeriods) {
      findings.push({
        id: 'heavy-users', kind: 'warning',
        text: `${f(heavyUsers.size)} user${heavyUsers.size > 1 ? 's have' : ' has'} implausibly many key events in ${f(heavyPeriods)} ${noun}${heavyPeriods > 1 ? 's' : ''} (more than ${f(Math.floor(fence))}, against a median of ${f(Math.round(medianCount))}; up to ${f(max)}), e.g. ${examples.join('; ')}.`,
        action: 'Look for test accounts, bots or a shared device id, and leave them out of the export; they count as one user each, but inflate event-based measures (early signals, RFM frequency).',
        data: { users: heavyUsers.size, periods: heavyPeriods, fence, median: medianCount, max, examples },
      });
    }
  }

  // per-person columns
  const pp = perPersonColumns(log).filter((c) => c.perPerson);
  if (pp.length) {
    findings.push({
      id: 'per-person-columns', kind: 'warning',
      text: `${pp.length > 1 ? 'Columns' : 'Column'} ${pp.map((c) => `'${showValue(c.column, 40)}' (${pc(c.share!)} of ${f(c.usersWithValue)} users hold a value of their own)`).join(', ')} ${pp.length > 1 ? 'look' : 'looks'} like personal identifiers (an email, a phone, a name).`,
      action: `Drop ${pp.length > 1 ? 'them' : 'it'} from the export if not needed: personal data. As --by ${pp.length > 1 ? 'they are' : 'it is'} refused unless ${PER_PERSON_FLAG} is given.`,
      data: pp,
    });
  }

  // local time given as UTC
  const tz = localAsUtc(log, rules.timezone);
  if (tz) findings.push(tz);

  // event names
  const d = log.detail;
  if (d && d.names.length > 1) {
    const byName = new Float64Array(d.names.length), keyOfName = new Uint8Array(d.names.length);
    for (let i = 0; i < log.size; i++) {
      byName[d.event[i]]++;
      keyOfName[d.event[i]] = d.key[i];
    }
    const rows = d.names.map((name, e) => ({ event: name, rows: byName[e], share: byName[e] / log.size, key: keyOfName[e] === 1 })).filter((r) => r.rows > 0).sort((a, b) => b.rows - a.rows);
    const top = rows[0];
    findings.push({
      id: 'event-names', kind: 'info',
      text: `${plural(rows.length, 'event name')}; the commonest, ${showValue(top.event, 40)}, is ${pc(top.share)} of the rows${rows.some((r) => !r.key) ? `; ${plural(rows.filter((r) => !r.key).length, 'name')} ${rows.filter((r) => !r.key).length === 1 ? 'does' : 'do'} not count as activity (${pc(rows.filter((r) => !r.key).reduce((a, r) => a + r.share, 0))} of rows)` : '; every name counts as activity'}.`,
      action: 'Check that the key events (activity.keyEvents in the rules) are the ones that show a user really used the product; a name making most rows may be a background event.',
      data: rows,
    });
  }

  // grain advice
  const advice: GrainAdvice = adviseGrain(log, t);
  const s = advice.suggestion;
  findings.push({
    id: 'grain', kind: 'info',
    text: s ? `${advice.reading}${s.grain !== rules.grain || s.lapseLimit !== rules.lapseLimit ? ` The rules use a ${rules.grain} grain and a lapse limit of ${rules.lapseLimit}.` : ' The rules already use them.'}` : advice.reading,
    action: s && (s.grain !== rules.grain || s.lapseLimit !== rules.lapseLimit) ? `Consider grain: ${s.grain} and lapseLimit: ${s.lapseLimit} in the rules; tidemark grain shows the gaps and the rule.` : 'Nothing to do.',
    data: advice,
  });

  return { rows: log.rows, findings, warnings: findings.filter((x) => x.kind === 'warning').length };
}

/**
 * The centre hour of the quietest 6 consecutive hours of a 24-hour histogram (circular): the window
 * with the fewest events; when several tie, the middle one of the longest run of tied windows.
 * @example busy 08:00-21:00 only: the windows starting 22:00 to 02:00 are empty; the middle starts at 00:00 → 3
 */
export function quietCentre(hours: ArrayLike<number>): number {
  const sums = Array.from({ length: 24 }, (_, s) => {
    let sum = 0;
    for (let k = 0; k < 6; k++) sum += hours[(s + k) % 24];
    return sum;
  });
  const min = Math.min(...sums);
  let bestStart = sums.indexOf(min), bestLen = 0;
  for (let s = 0; s < 24; s++) {
    if (sums[s] !== min || (sums[(s + 23) % 24] === min && sums.some((v) => v !== min))) continue; // only starts of runs
    let len = 0;
    while (len < 24 && sums[(s + len) % 24] === min) len++;
    if (len > bestLen) {
      bestLen = len;
      bestStart = s;
    }
  }
  return (bestStart + Math.floor((bestLen - 1) / 2) + 3) % 24;
}

const night = (h: number) => h >= 1 && h <= 6;

/**
 * Local time written as UTC: rows written at offset zero, with the rules' zone 2 or more hours away
 * from UTC; their quietest hours are at night on the written clock and not in the rules' zone. Needs
 * 500 such rows.
 */
export function localAsUtc(log: EventLog, zone: string): CheckFinding | undefined {
  const d = log.detail;
  if (!d) return undefined;
  const clock = new ZoneClock(zone);
  const local = new Float64Array(24), written = new Float64Array(24);
  let n = 0, offsetSum = 0;
  for (let i = 0; i < log.size; i++) {
    if (d.tsForm[i] !== TS_ZERO_OFFSET) continue;
    const w = log.wallMs[i];
    const off = clock.offsetMinutes(w);
    offsetSum += off;
    local[Math.floor((((w % DAY) + DAY) % DAY) / 3_600_000)]++;
    const utc = w - off * 60_000;
    written[Math.floor((((utc % DAY) + DAY) % DAY) / 3_600_000)]++;
    n++;
  }
  if (n < 500 || Math.abs(offsetSum / n) < 120) return undefined;
  const cw = quietCentre(written), cl = quietCentre(local);
  if (!night(cw) || night(cl)) return undefined;
  return {
    id: 'local-time-as-utc', kind: 'warning',
    text: `${f(n)} timestamps are written as UTC (Z, +00:00 or epoch), but read in ${zone} their quietest hours centre on ${cl}:00, while on the clock as written they centre on ${cw}:00, at night: they look like local time labelled as UTC.`,
    action: `If the exporter wrote local clock time with a Z, drop the Z (tidemark then reads it as local time in ${zone}) or fix the export; if the times really are UTC, check the rules' timezone.`,
    data: { rows: n, quietCentreAsWritten: cw, quietCentreInZone: cl, zone },
  };
}
