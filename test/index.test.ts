import { describe, expect, it } from 'vitest';
import * as tidemark from '../src/index.js';

describe('the library API', () => {
  it('exports the main entry points as functions', () => {
    for (const name of ['loadRulesFile', 'parseRules', 'readEvents', 'MemoryEngine', 'summariseFlows', 'explainRetention', 'computeProjection', 'kaplanMeier', 'fitSbg', 'buildReport', 'writeReport', 'wilsonInterval', 'audienceFromEvents', 'pseudonym', 'diffRules'] as const) {
      expect(typeof tidemark[name], name).toBe('function');
    }
    expect(tidemark.STATES).toEqual(['fresh', 'engaged', 'returned', 'lapsing', 'dormant']);
    expect(typeof tidemark.markov.stationary).toBe('function');
  });
});
