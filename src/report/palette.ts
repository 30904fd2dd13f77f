/**
 * tidemark's state colours come from the table of states (src/lifecycle/states.ts): our own five,
 * chosen to stay apart for the common colour-vision deficiencies. Hue alone never carries the meaning:
 * the five differ in lightness too (two blues, two warm tones, a neutral), so they also separate in
 * greyscale, and every chart labels states in text. Split states take lighter and darker shades of
 * the state they split.
 */
import { BASE_STATES } from '../lifecycle/states.js';

/** The base states' colours, by name. */
export const STATE_COLOURS: Record<string, string> = Object.fromEntries(BASE_STATES.map((s) => [s.name, s.colour]));

/** Colours for a list of states: from `table` (a waist's states) when given, else the base colours; a neutral cycle for others. */
export function stateColours(states: readonly string[], table: readonly { name: string; colour: string }[] = []): string[] {
  const spare = ['#6C8EAD', '#A3785B', '#7D9B76', '#B07AA1', '#5F6B73'];
  let k = 0;
  return states.map((s) => table.find((t) => t.name === s)?.colour ?? STATE_COLOURS[s] ?? spare[k++ % spare.length]);
}

/**
 * The xterm 256-colour code nearest to a colour (the 6×6×6 cube and the grey ramp).
 * @example ansi256('#1D4F91') // 24
 */
export function ansi256(hex: string): number {
  const n = parseInt(hex.slice(1), 16);
  const rgb = [(n >> 16) & 255, (n >> 8) & 255, n & 255];
  const levels = [0, 95, 135, 175, 215, 255];
  const near = (v: number) => levels.reduce((best, l, i) => (Math.abs(l - v) < Math.abs(levels[best] - v) ? i : best), 0);
  const cube = rgb.map(near);
  const cubeCode = 16 + 36 * cube[0] + 6 * cube[1] + cube[2];
  const cubeDist = rgb.reduce((a, v, i) => a + (v - levels[cube[i]]) ** 2, 0);
  const grey = Math.max(0, Math.min(23, Math.round((rgb.reduce((a, b) => a + b, 0) / 3 - 8) / 10)));
  const greyDist = rgb.reduce((a, v) => a + (v - (8 + 10 * grey)) ** 2, 0);
  return greyDist < cubeDist ? 232 + grey : cubeCode;
}

/** Wrap text in the state's terminal colour (when colour is wanted); `table` as in {@link stateColours}. */
export function ansiState(state: string, text: string, colour: boolean, table: readonly { name: string; colour: string }[] = []): string {
  const hex = table.find((t) => t.name === state)?.colour ?? STATE_COLOURS[state];
  return colour && hex !== undefined ? `\u001b[38;5;${ansi256(hex)}m${text}\u001b[0m` : text;
}

/**
 * Colours for series that are not states: the rate and mix effects, cohort blocks, scenarios,
 * methods compared in a backtest. Our own five, picked by a max–min search (the smallest colour
 * difference under normal vision and three simulated colour-vision deficiencies, made as large as we
 * could) among hues away from the state colours: purple, green, wine, forest, pink. They alternate
 * dark and light, so they also separate in greyscale, and differ from every state colour by ΔE*ab ≥ 30
 * in normal vision, so a reader never takes a series for a state. Under a deficiency a series may come
 * close to a state colour: charts never mix the two sets, and label series in text (and lines by dash).
 * Tested in test/report/palette.test.ts.
 */
export const SERIES = ['#964BB4', '#3CB469', '#87004B', '#1E5A00', '#F087C3'] as const;
/** Dash patterns that go with {@link SERIES} for lines (the first solid), so lines differ without colour too. */
export const SERIES_DASH: readonly (readonly number[])[] = [[], [7, 3], [2, 2], [10, 3, 2, 3], [4, 4]];

/** The colour of series `i` (cycling past the fifth; pair it with {@link seriesDash} beyond that). */
export function seriesColour(i: number): string {
  return SERIES[i % SERIES.length];
}

/** The dash of series `i`: cycles at a different period from the colours, so ten series stay apart. */
export function seriesDash(i: number): number[] {
  return [...SERIES_DASH[(i + Math.floor(i / SERIES.length)) % SERIES_DASH.length]];
}

/**
 * The sequential ramp for shares and rates (heat maps, the cohort triangle): near white to forest
 * green, a hue no state has. Lightness falls at every stop under normal vision and each simulated
 * deficiency (tested), so the order reads without hue.
 */
export const RAMP = ['#FAFCF8', '#C2DFB4', '#86C085', '#4A9460', '#1E5A3A'];

/** Text on a ramp cell: dark ink up to this share of the ramp's domain, white beyond it. */
export const RAMP_INK_SWITCH = 0.6;

/** @deprecated Two series colours; use {@link SERIES} (the old names read as gain and loss, which they are not). */
export const GAIN = SERIES[0];
/** @deprecated See {@link GAIN}. */
export const LOSS = SERIES[1];
