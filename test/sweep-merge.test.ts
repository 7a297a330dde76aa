/**
 * Merging shard folders on synthetic points: joined in index order, identical duplicates
 * kept once, conflicting duplicates and shards of different scenarios refused (the CLI
 * with exit 2 and both folders named).
 */
import { existsSync, mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cli, requireDist } from './fixtures/cli';
import { InputError } from '../src/scenario/errors';
import { failedPointSummary, makeHeader, PointWriter, readPoints, writeHeader } from '../src/sweep/persist';
import type { PointRecord } from '../src/sweep/persist';
import { mergeShards } from '../src/sweep/merge';

const tmp = scratchDir('merge');

const AXES = [{ key: 'drive.amplitude', values: [1e-9, 2e-9, 3e-9, 4e-9, 5e-9], scale: 'linear' as const }];

function rec(index: number, note = ''): PointRecord {
  return {
    index,
    axes: { 'drive.amplitude': AXES[0].values[index] },
    summary: failedPointSummary(`point ${index}${note}`),
    wall_s: Math.random(),
  };
}

function shardDir(
  name: string,
  sha: string,
  shard: { index: number; count: number } | null,
  indices: number[],
  note = '',
): string {
  const d = join(tmp, name);
  mkdirSync(d, { recursive: true });
  writeHeader(
    d,
    makeHeader({
      name: 'merge-test',
      scenario_sha256: sha,
      scenario: {},
      source: null,
      axes: AXES,
      total_points: 5,
      shard,
    }),
  );
  const w = new PointWriter(join(d, 'points.ndjson'));
  for (const i of indices) w.write(rec(i, note));
  w.close();
  return d;
}

const SHA_A = 'a'.repeat(64);
const SHA_B = 'b'.repeat(64);

describe('merge', () => {
  it('joins shards in index order; an identical point in two shards is kept once (its run time may differ)', () => {
    const a = shardDir('s1', SHA_A, { index: 1, count: 2 }, [4, 0, 2]);
    const b = shardDir('s2', SHA_A, { index: 2, count: 2 }, [3, 1, 2]);
    const warnings: string[] = [];
    const out = mergeShards([a, b], { outDir: join(tmp, 'merged'), onWarning: (m) => warnings.push(m) });
    expect(out.records.map((r) => r.index)).toEqual([0, 1, 2, 3, 4]);
    expect(out.duplicates).toBe(1);
    expect(out.missing).toBe(0);
    expect(readPoints(join(tmp, 'merged', 'points.ndjson')).records.map((r) => r.index)).toEqual([
      0, 1, 2, 3, 4,
    ]);
    const header = JSON.parse(readFileSync(join(tmp, 'merged', 'sweep.json'), 'utf8'));
    expect(header.shard).toBeNull();
    expect(header.scenario_sha256).toBe(SHA_A);
    expect(existsSync(join(tmp, 'merged', 'map.json'))).toBe(true);
    expect(warnings.some((w) => /more than one shard/.test(w))).toBe(true);
  });

  it('defaults the output to the first folder’s parent/<name>-merged and counts missing points', () => {
    const a = shardDir('only/s1', SHA_A, { index: 1, count: 2 }, [0, 2, 4]);
    const out = mergeShards([a]);
    expect(out.dir).toBe(join(tmp, 'only', 'merge-test-merged'));
    expect(out.missing).toBe(2);
  });

  it('refuses a point whose results differ between shards', () => {
    const a = shardDir('c1', SHA_A, null, [0, 1]);
    const b = shardDir('c2', SHA_A, null, [1], ' (other)');
    expect(() => mergeShards([a, b], { outDir: join(tmp, 'cm') })).toThrow(/point 1 differs/);
  });

  it('refuses shards of different scenarios, naming each folder and hash', () => {
    const a = shardDir('h1', SHA_A, { index: 1, count: 2 }, [0]);
    const b = shardDir('h2', SHA_B, { index: 2, count: 2 }, [1]);
    try {
      mergeShards([a, b], { outDir: join(tmp, 'hm') });
      throw new Error('no error');
    } catch (err) {
      expect(err).toBeInstanceOf(InputError);
      expect((err as InputError).message).toMatch(/different scenarios/);
      expect((err as InputError).message).toContain(a);
      expect((err as InputError).message).toContain(b);
    }
  });

  it('the merge command exits 2 with a clear message for mixed scenarios, and 0 for one scenario', () => {
    requireDist();
    const a = shardDir('x1', SHA_A, { index: 1, count: 2 }, [0]);
    const b = shardDir('x2', SHA_B, { index: 2, count: 2 }, [1]);
    const bad = cli('merge', a, b, '--out', join(tmp, 'xm'));
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/refusing to merge shards of different scenarios/);
    expect(bad.err).not.toMatch(/^\s+at .+[(:]/m); // no stack trace
    const c = shardDir('x3', SHA_A, { index: 2, count: 2 }, [1, 3]);
    const good = cli('merge', a, c, '--out', join(tmp, 'xg'));
    expect(good.code).toBe(0);
    expect(good.out).toMatch(/3\/5 points/);
  });
});
