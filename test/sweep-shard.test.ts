/**
 * Shards: I of N runs index % N == I - 1, so the shards cover every point exactly once;
 * the SLURM array variables map to I and N as documented in src/sweep/shard.ts.
 */
import { describe, expect, it } from 'vitest';
import { inShard, parseShard, shardFromSlurm, shardIndices } from '../src/sweep/shard';

describe('sweep shards', () => {
  it('shards 1..N of any grid cover every index exactly once (N = 1..7, totals 0..50)', () => {
    for (let n = 1; n <= 7; n++) {
      for (let total = 0; total <= 50; total++) {
        const count = new Array<number>(total).fill(0);
        for (let i = 1; i <= n; i++) {
          for (const k of shardIndices(total, { index: i, count: n })) {
            count[k]++;
            expect(inShard(k, { index: i, count: n })).toBe(true);
          }
        }
        expect(count.every((c) => c === 1)).toBe(true);
      }
    }
  });

  it('shard 2/3 of 10 points is 1, 4, 7 (index % 3 == 1)', () => {
    expect(shardIndices(10, { index: 2, count: 3 })).toEqual([1, 4, 7]);
    expect(shardIndices(4, null)).toEqual([0, 1, 2, 3]);
  });

  it('parses I/N and refuses 0/3, 4/3 and text', () => {
    expect(parseShard('2/8')).toEqual({ index: 2, count: 8 });
    for (const bad of ['0/3', '4/3', 'a/b', '3']) expect(() => parseShard(bad)).toThrow(/--shard/);
  });

  it('takes I = TASK_ID - TASK_MIN + 1 and N = TASK_COUNT from a SLURM array', () => {
    expect(
      shardFromSlurm({ SLURM_ARRAY_TASK_ID: '5', SLURM_ARRAY_TASK_MIN: '3', SLURM_ARRAY_TASK_COUNT: '4' }),
    ).toEqual({ index: 3, count: 4 });
    expect(shardFromSlurm({ SLURM_ARRAY_TASK_ID: '0', SLURM_ARRAY_TASK_COUNT: '8' })).toEqual({
      index: 1,
      count: 8,
    });
    expect(
      shardFromSlurm({ SLURM_ARRAY_TASK_ID: '8', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_COUNT: '8' }),
    ).toEqual({ index: 8, count: 8 });
    expect(shardFromSlurm({})).toBeNull();
    expect(() =>
      shardFromSlurm({ SLURM_ARRAY_TASK_ID: '2', SLURM_ARRAY_TASK_COUNT: '4', SLURM_ARRAY_TASK_STEP: '2' }),
    ).toThrow(/step/);
  });
});
