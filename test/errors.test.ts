import { describe, expect, it } from 'vitest';
import { TidemarkError, escapeControls, showValue } from '../src/errors.js';

describe('showValue(value, max)', () => {
  it('escapes newlines, tabs and terminal control codes so a message stays on one line', () => {
    expect(showValue('a\nb\r\tc\u001b[31mred')).toBe('a\\nb\\r\\tc\\u001b[31mred');
  });
  it('escapes C1 controls, DEL, line separators and bidirectional overrides', () => {
    expect(escapeControls('\u0085\u007f\u2028\u202e\u2066')).toBe('\\u0085\\u007f\\u2028\\u202e\\u2066');
  });
  it('cuts a long value to max characters with an ellipsis', () => {
    const v = showValue('x'.repeat(3000), 60);
    expect(v).toHaveLength(60);
    expect(v.endsWith('…')).toBe(true);
  });
  it('leaves ordinary text, accents and emoji as they are', () => {
    expect(showValue('São Paulo 🛠')).toBe('São Paulo 🛠');
  });
});

describe('TidemarkError.oneLine()', () => {
  it('never contains a raw newline or escape, whatever the message, file or hint hold', () => {
    const e = new TidemarkError('EVENTS_BAD_ROW', 'bad\nvalue', { file: 'a\u001b[2Jb.csv', line: 3 }, 'fix\rit');
    const line = e.oneLine();
    expect(line).not.toMatch(/[\u0000-\u001f]/);
    expect(line).toBe('a\\u001b[2Jb.csv:3: bad\\nvalue. Fix\\rit');
  });
});
