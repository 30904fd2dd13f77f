/** English count agreement: singular for exactly one, plural otherwise, zero included (common practice of English grammar). */
import { describe, expect, it } from 'vitest';
import { noun, plural } from '../../src/text/plural.js';

describe('plural', () => {
  it('is singular for exactly one and plural for zero, two and many', () => {
    expect(plural(1, 'period')).toBe('1 period');
    expect(plural(0, 'period')).toBe('0 periods');
    expect(plural(2, 'user')).toBe('2 users');
    expect(plural(-1, 'point')).toBe('-1 point');
  });

  it('groups thousands as en-US and takes an irregular plural', () => {
    expect(plural(20063, 'user')).toBe('20,063 users');
    expect(plural(1, 'entry', 'entries')).toBe('1 entry');
    expect(plural(3, 'entry', 'entries')).toBe('3 entries');
  });

  it('a fraction is never singular', () => {
    expect(plural(1.5, 'week')).toBe('1.5 weeks');
    expect(noun(1, 'age')).toBe('age');
    expect(noun(4, 'age')).toBe('ages');
  });
});
