/**
 * points.ndjson and sweep.json on synthetic files: whole lines, a torn last line dropped
 * (never parsed as data) and repaired before appending, headers of another scenario refused.
 */
import { appendFileSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { InputError } from '../src/scenario/errors';
import {
  assertSameSweep,
  failedPointSummary,
  formatPointLine,
  makeHeader,
  PointWriter,
  readHeader,
  readPoints,
  repairPoints,
  writeHeader,
} from '../src/sweep/persist';
import type { PointRecord } from '../src/sweep/persist';

const tmp = scratchDir('persist');

function rec(index: number, a: number): PointRecord {
  return {
    index,
    axes: { 'drive.amplitude': a },
    summary: failedPointSummary(`synthetic ${index}`),
    wall_s: 0.01,
  };
}

describe('points.ndjson', () => {
  it('writes one whole line per point and reads them back in order', () => {
    const f = join(tmp, 'a.ndjson');
    const w = new PointWriter(f);
    [0, 3, 1].forEach((i) => w.write(rec(i, i * 1e-9)));
    w.close();
    const text = readFileSync(f, 'utf8');
    expect(text.split('\n')).toHaveLength(4); // three lines and the empty string after the last newline
    const r = readPoints(f);
    expect(r.records.map((x) => x.index)).toEqual([0, 3, 1]);
    expect(r.dropped).toEqual([]);
    expect(r.goodBytes).toBe(r.totalBytes);
  });

  it('drops a torn last line (no newline) with a warning line number, and repair makes it safe to append', () => {
    const f = join(tmp, 'b.ndjson');
    writeFileSync(f, formatPointLine(rec(0, 1e-9)) + formatPointLine(rec(1, 2e-9)));
    const torn = formatPointLine(rec(2, 3e-9)).slice(0, 40); // a point cut mid-write
    appendFileSync(f, torn);
    const r = readPoints(f);
    expect(r.records.map((x) => x.index)).toEqual([0, 1]);
    expect(r.dropped).toHaveLength(1);
    expect(r.dropped[0].line).toBe(3);
    expect(r.dropped[0].reason).toMatch(/incomplete/);
    repairPoints(f, r);
    const w = new PointWriter(f);
    w.write(rec(2, 3e-9));
    w.close();
    const again = readPoints(f);
    expect(again.records.map((x) => x.index)).toEqual([0, 1, 2]);
    expect(again.dropped).toEqual([]);
  });

  it('drops an unparsable line, a line that is not a point, and a repeated index (the first one wins)', () => {
    const f = join(tmp, 'c.ndjson');
    writeFileSync(
      f,
      formatPointLine(rec(0, 1e-9)) +
        '{"index": 1, "axes": {}, "summ\n' +
        '{"hello": 1}\n' +
        formatPointLine(rec(0, 9e-9)) +
        formatPointLine(rec(1, 2e-9)),
    );
    const r = readPoints(f);
    expect(r.records.map((x) => [x.index, x.axes['drive.amplitude']])).toEqual([
      [0, 1e-9],
      [1, 2e-9],
    ]);
    expect(r.dropped.map((d) => d.line)).toEqual([2, 3, 4]);
  });

  it('a missing file reads as no points', () => {
    expect(readPoints(join(tmp, 'none.ndjson')).records).toEqual([]);
  });
});

describe('sweep.json', () => {
  const h = (sha: string, shard: { index: number; count: number } | null = null) =>
    makeHeader({
      name: 'x',
      scenario_sha256: sha,
      scenario: {},
      source: null,
      axes: [{ key: 'drive.amplitude', values: [1, 2], scale: 'linear' }],
      total_points: 2,
      shard,
    });

  it('round-trips and accepts the same sweep', () => {
    const d = join(tmp, 'h1');
    mkdirSync(d);
    writeHeader(d, h('a'.repeat(64)));
    const back = readHeader(d)!;
    expect(back.scenario_sha256).toBe('a'.repeat(64));
    expect(() => assertSameSweep(d, back, h('a'.repeat(64)))).not.toThrow();
  });

  it('refuses another scenario hash and another shard, with exit code 2', () => {
    const d = join(tmp, 'h2');
    expect(() => assertSameSweep(d, h('a'.repeat(64)), h('b'.repeat(64)))).toThrow(/another scenario/);
    try {
      assertSameSweep(
        d,
        h('a'.repeat(64), { index: 1, count: 2 }),
        h('a'.repeat(64), { index: 2, count: 2 }),
      );
      throw new Error('no error');
    } catch (err) {
      expect(err).toBeInstanceOf(InputError);
      expect((err as InputError).exitCode).toBe(2);
      expect((err as InputError).message).toMatch(/shard 1\/2/);
    }
  });
});
