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

/** Two-sided diverging colours for gains and losses (blue gain, orange loss), and a sequential ramp. */
export const GAIN = '#1D4F91';
export const LOSS = '#C4622D';
export const RAMP = ['#F4F7FB', '#C9DCEF', '#8DB7E0', '#4C87C3', '#1D4F91'];
