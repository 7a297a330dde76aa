/**
 * Sharding a sweep over separate processes or machines: shard I of N (1-based) runs the
 * points whose index satisfies index % N == I - 1, so the shards cover every point
 * exactly once and each shard's share is spread over the whole grid (neighbouring
 * points, which cost alike, land in different shards).
 *
 * On a SLURM job array, `--shard` may be left out: I and N come from the environment.
 *   N = SLURM_ARRAY_TASK_COUNT
 *   I = SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN + 1   (SLURM_ARRAY_TASK_MIN taken as 0 if unset,
 *       so `--array=0-7` and `--array=1-8` both give shards 1..8)
 * An array with a step (`--array=0-14:2`) is refused: its task ids are not 1..N apart.
 */
import { InputError } from '../scenario/errors';

export interface Shard {
  /** 1-based shard number */
  index: number;
  count: number;
}

/**
 * Parse "I/N" (1 <= I <= N). Throws InputError naming the option (`where`) otherwise.
 */
export function parseShard(text: string, where = '--shard'): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new InputError(null, [{ path: where, message: `expected I/N such as 2/8, found '${text}'` }]);
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index < 1 || index > count) {
    throw new InputError(null, [{ path: where, message: `expected 1 <= I <= N, found '${text}'` }]);
  }
  return { index, count };
}

/**
 * The shard from a SLURM job array's environment, or null when SLURM_ARRAY_TASK_ID or
 * SLURM_ARRAY_TASK_COUNT is unset. Mapping in the module comment. Throws InputError when
 * the variables are set but do not give 1 <= I <= N.
 */
export function shardFromSlurm(env: NodeJS.ProcessEnv = process.env): Shard | null {
  const id = env.SLURM_ARRAY_TASK_ID;
  const count = env.SLURM_ARRAY_TASK_COUNT;
  if (id === undefined || count === undefined || id === '' || count === '') return null;
  const step = env.SLURM_ARRAY_TASK_STEP;
  if (step !== undefined && step !== '' && step !== '1') {
    throw new InputError(null, [
      {
        path: 'SLURM_ARRAY_TASK_STEP',
        message: `expected a job array without a step (1), found ${step}; pass --shard I/N instead`,
      },
    ]);
  }
  const min =
    env.SLURM_ARRAY_TASK_MIN !== undefined && env.SLURM_ARRAY_TASK_MIN !== ''
      ? Number(env.SLURM_ARRAY_TASK_MIN)
      : 0;
  const i = Number(id) - min + 1;
  return parseShard(`${i}/${Number(count)}`, 'SLURM_ARRAY_TASK_ID / SLURM_ARRAY_TASK_COUNT');
}

/** The shard to run: `--shard` if given, else the SLURM array's, else null (the whole grid). */
export function resolveShard(option: string | undefined, env: NodeJS.ProcessEnv = process.env): Shard | null {
  if (option !== undefined) return parseShard(option);
  return shardFromSlurm(env);
}

/** True if the point at `index` belongs to `shard` (every point belongs to the null shard). */
export function inShard(index: number, shard: Shard | null): boolean {
  return shard === null || index % shard.count === shard.index - 1;
}

/** The point indices of a grid of `total` points that `shard` runs, ascending. */
export function shardIndices(total: number, shard: Shard | null): number[] {
  const out: number[] = [];
  const start = shard === null ? 0 : shard.index - 1;
  const step = shard === null ? 1 : shard.count;
  for (let i = start; i < total; i += step) out.push(i);
  return out;
}

/** "shard-2-of-8": the folder name of a shard. */
export function shardFolderName(shard: Shard): string {
  return `shard-${shard.index}-of-${shard.count}`;
}
