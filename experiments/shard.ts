/**
 * Which share of a sweep this process runs: shard i of n takes the runs whose plan index k
 * has k mod n = i. From `--shard i/n`, else from a Slurm array job (SLURM_ARRAY_TASK_ID
 * counted from SLURM_ARRAY_TASK_MIN, of SLURM_ARRAY_TASK_COUNT), else from a Kubernetes
 * Indexed Job (JOB_COMPLETION_INDEX, of JOB_COMPLETIONS, which the Job's manifest sets to
 * its spec.completions because Kubernetes does not export it), else the whole plan.
 */
import { InputError } from '../sim/errors.ts';

export interface Shard {
  index: number;
  count: number;
  /** Where the shard came from, for messages. */
  source: string;
}

export const wholePlan: Shard = { index: 0, count: 1, source: 'the whole plan' };

function whole(text: string | undefined): number | null {
  if (text === undefined || !/^\s*\d+\s*$/.test(text)) return null;
  const value = Number(text);
  return Number.isSafeInteger(value) ? value : null;
}

export function shardFrom(option: string | undefined, env: NodeJS.ProcessEnv = process.env): Shard {
  if (option !== undefined) {
    const match = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(option);
    const index = match ? Number(match[1]) : NaN;
    const count = match ? Number(match[2]) : NaN;
    if (!match || !(count >= 1) || !(index < count)) {
      throw new InputError(`--shard: got ${JSON.stringify(option)}, expected i/n with 0 <= i < n, e.g. 0/16 for the first of 16 shards`);
    }
    return { index, count, source: `--shard ${index}/${count}` };
  }
  if (env.SLURM_ARRAY_TASK_ID !== undefined) {
    const id = whole(env.SLURM_ARRAY_TASK_ID);
    const count = whole(env.SLURM_ARRAY_TASK_COUNT);
    const min = env.SLURM_ARRAY_TASK_MIN === undefined ? 0 : whole(env.SLURM_ARRAY_TASK_MIN);
    if (id === null || count === null || count < 1 || min === null || id - min < 0 || id - min >= count) {
      throw new InputError(
        `SLURM_ARRAY_TASK_ID: got ${JSON.stringify(env.SLURM_ARRAY_TASK_ID)} (SLURM_ARRAY_TASK_MIN ${JSON.stringify(env.SLURM_ARRAY_TASK_MIN)}, SLURM_ARRAY_TASK_COUNT ${JSON.stringify(env.SLURM_ARRAY_TASK_COUNT)}), expected an array index from MIN to MIN + COUNT - 1 of a contiguous --array range such as 0-15; or pass --shard i/n`,
      );
    }
    return { index: id - min, count, source: `Slurm array task ${id} of ${count}` };
  }
  if (env.JOB_COMPLETION_INDEX !== undefined) {
    const index = whole(env.JOB_COMPLETION_INDEX);
    const count = whole(env.JOB_COMPLETIONS);
    if (index === null || count === null || count < 1 || index >= count) {
      throw new InputError(
        `JOB_COMPLETION_INDEX: got ${JSON.stringify(env.JOB_COMPLETION_INDEX)} with JOB_COMPLETIONS ${JSON.stringify(env.JOB_COMPLETIONS)}, expected an index below JOB_COMPLETIONS (set JOB_COMPLETIONS to the Job's spec.completions in its manifest); or pass --shard i/n`,
      );
    }
    return { index, count, source: `Kubernetes completion index ${index} of ${count}` };
  }
  return wholePlan;
}
