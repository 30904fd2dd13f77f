/**
 * A hint for a period label that is not one of the labels: periods are labelled by their start date,
 * so a date inside a period points to that period; otherwise the nearest label by date.
 * Example: labels ['2026-09-07', '2026-09-14'], '2026-09-15' → "2026-09-15 lies in the period labelled 2026-09-14".
 */
import { suggestion } from '../errors.js';

const day = (s: string) => (/^\d{4}-\d{2}-\d{2}$/.test(s) ? Date.parse(`${s}T00:00:00Z`) : NaN);

export function periodHint(label: string, labels: readonly string[]): string | undefined {
  const t = day(label);
  if (Number.isNaN(t) || labels.length === 0) return suggestion(label, labels);
  const times = labels.map(day);
  for (let i = 0; i < labels.length; i++) {
    const next = i + 1 < labels.length ? times[i + 1] : times[i] + (times[i] - (times[i - 1] ?? times[i] - 86_400_000));
    if (t > times[i] && t < next) return `${label} lies in the period labelled ${labels[i]} (periods are labelled by their start date)`;
  }
  let best = 0;
  for (let i = 1; i < labels.length; i++) if (Math.abs(times[i] - t) < Math.abs(times[best] - t)) best = i;
  return `the nearest period is ${labels[best]}; periods run from ${labels[0]} to ${labels[labels.length - 1]}`;
}
