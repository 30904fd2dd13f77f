/**
 * tidemark's state colours: our own five, chosen to stay apart for the common colour-vision
 * deficiencies. Hue alone never carries the meaning: the five differ in lightness too (two blues, two
 * warm tones, a neutral), so they also separate in greyscale, and every chart labels states in text.
 *
 * | state    | colour  | reading                      |
 * |----------|---------|------------------------------|
 * | fresh    | #5AA9E6 | light sky blue: arriving      |
 * | engaged  | #1D4F91 | deep blue: the steady core    |
 * | returned | #E9B44C | saffron: back again           |
 * | lapsing  | #C4622D | burnt orange: slipping        |
 * | dormant  | #8E8E8E | mid grey: gone quiet          |
 */
export const STATE_COLOURS: Record<string, string> = {
  fresh: '#5AA9E6',
  engaged: '#1D4F91',
  returned: '#E9B44C',
  lapsing: '#C4622D',
  dormant: '#8E8E8E',
};

/** Colours for any list of states: the named ones first, a neutral cycle for others. */
export function stateColours(states: readonly string[]): string[] {
  const spare = ['#6C8EAD', '#A3785B', '#7D9B76', '#B07AA1', '#5F6B73'];
  let k = 0;
  return states.map((s) => STATE_COLOURS[s] ?? spare[k++ % spare.length]);
}

/** 256-colour terminal codes close to the state colours, for coloured terminal output. */
export const STATE_ANSI: Record<string, number> = { fresh: 74, engaged: 25, returned: 179, lapsing: 166, dormant: 245 };

/** Wrap text in the state's terminal colour (when colour is wanted). */
export function ansiState(state: string, text: string, colour: boolean): string {
  const c = STATE_ANSI[state];
  return colour && c !== undefined ? `\u001b[38;5;${c}m${text}\u001b[0m` : text;
}

/** Two-sided diverging colours for gains and losses (blue gain, orange loss), and a sequential ramp. */
export const GAIN = '#1D4F91';
export const LOSS = '#C4622D';
export const RAMP = ['#F4F7FB', '#C9DCEF', '#8DB7E0', '#4C87C3', '#1D4F91'];
