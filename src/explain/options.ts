/** Options shared by the rate-producing functions of `src/explain`, validated where they enter. */
import { TidemarkError } from '../errors.js';

export interface RateOptions {
  /** Two-sided confidence level of the intervals; default 0.95. */
  confidence?: number;
  /** Rates resting on fewer than this many members are flagged `small`; default 30. */
  minN?: number;
}

/**
 * The options with defaults filled in.
 *
 * @throws {TidemarkError} INPUT_INVALID when confidence is not strictly between 0 and 1 or minN is
 *   not a number ≥ 0.
 * @example rateOptions({}) // { confidence: 0.95, minN: 30 }
 */
export function rateOptions(o: RateOptions): Required<RateOptions> {
  const confidence = o.confidence ?? 0.95;
  const minN = o.minN ?? 30;
  if (!(confidence > 0 && confidence < 1)) throw new TidemarkError('INPUT_INVALID', `confidence must be strictly between 0 and 1, got ${confidence}`, { key: 'confidence' });
  if (!(minN >= 0)) throw new TidemarkError('INPUT_INVALID', `minN must be a number ≥ 0, got ${minN}`, { key: 'minN' });
  return { confidence, minN };
}
