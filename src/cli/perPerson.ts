/** The flag that lets `--by` split by a per-person column (see src/lifecycle/perPerson.ts). */
import type { Command } from 'commander';
import { PER_PERSON_FLAG } from '../lifecycle/perPerson.js';

export interface PerPersonOption {
  publishPerPersonValues?: boolean;
}

export function addPerPersonOption(cmd: Command): Command {
  return cmd.option(PER_PERSON_FLAG,
    'allow --by on a column whose values are nearly unique per user (an email, a phone number): the output then holds one value per person, which identifies people; sentences still never name them');
}
