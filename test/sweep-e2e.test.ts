/**
 * The real binary on a tiny 3 x 2 sweep (test/fixtures/sweep/tiny-sweep.yaml), every point
 * computed (--full; refinement has its own tests in sweep-refine.test.ts): results do
 * not depend on --jobs, on being killed (-9 or Ctrl-C) and resumed, or on sharding and
 * merging. The independent expectation is always the same sweep run once, uninterrupted:
 * every point present exactly once with the same summary (run time aside).
 * Needs dist/ built (`npm test` builds it first; alone: `npm run build`).
 */
import { appendFileSync, cpSync, existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cliAsync, cliSync, requireDist, ROOT } from './fixtures/cli';

const TINY = join(ROOT, 'test', 'fixtures', 'sweep', 'tiny-sweep.yaml');
const FAIL = join(ROOT, 'test', 'fixtures', 'sweep', 'tiny-fail.yaml');
const TOTAL = 6;
const tmp = scratchDir('sweep');
let reference: Map<number, string>;
let referenceOut = '';

/** Point index -> canonical JSON of its axes and summary; fails on a repeated index or a line that is not whole. */
function pointsOf(dir: string): Map<number, string> {
  const text = readFileSync(join(dir, 'points.ndjson'), 'utf8');
  expect(text === '' || text.endsWith('\n')).toBe(true);
  const out = new Map<number, string>();
  for (const line of text.split('\n').filter((l) => l !== '')) {
    const r = JSON.parse(line);
    expect(out.has(r.index)).toBe(false);
    out.set(r.index, JSON.stringify({ axes: r.axes, summary: r.summary }));
  }
  return out;
}

function lineCount(file: string): number {
  return existsSync(file)
    ? readFileSync(file, 'utf8')
        .split('\n')
        .filter((l) => l !== '').length
    : 0;
}

async function waitForLines(file: string, n: number, timeout_ms = 60_000): Promise<void> {
  const t0 = Date.now();
  while (lineCount(file) < n) {
    if (Date.now() - t0 > timeout_ms)
      throw new Error(`${file}: fewer than ${n} lines after ${timeout_ms} ms`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

function expectSameAsReference(points: Map<number, string>) {
  expect([...points.keys()].sort((a, b) => a - b)).toEqual([...Array(TOTAL).keys()]);
  for (const [i, v] of reference) expect(points.get(i), `point ${i}`).toBe(v);
}

beforeAll(() => {
  requireDist();
  const r = cliSync(['sweep', TINY, '--full', '--out', join(tmp, 'ref'), '--jobs', '2', '--quiet']);
  expect(r.code, r.err).toBe(0);
  referenceOut = r.out;
  reference = pointsOf(join(tmp, 'ref'));
});

describe('sweep command end to end', () => {
  it('writes points.ndjson, sweep.json, map.json and report.html; every grid point once', () => {
    const dir = join(tmp, 'ref');
    expect(reference.size).toBe(TOTAL);
    for (const f of ['sweep.json', 'map.json', 'report.html']) expect(existsSync(join(dir, f)), f).toBe(true);
    const map = JSON.parse(readFileSync(join(dir, 'map.json'), 'utf8'));
    expect(map.total_points).toBe(TOTAL);
    expect(map.finished_points).toBe(TOTAL);
    expect(map.classes.every((c: string | null) => c !== null)).toBe(true);
    expect(map.onset_curve).toHaveLength(2); // one entry per frequency of the grid
    const header = JSON.parse(readFileSync(join(dir, 'sweep.json'), 'utf8'));
    expect(header.total_points).toBe(TOTAL);
    expect(header.axes.map((a: { key: string }) => a.key)).toEqual(['drive.amplitude', 'drive.frequency']);
    // the terminal names the same recommended point (or the same reason for none) as map.json
    const line = map.recommended
      ? `recommended operating point: ${map.recommended.reason}`
      : `no recommended operating point: ${map.recommended_reason.replace(/^no operating point: /, '')}`;
    expect(referenceOut).toContain(`${line}\n`);
  });

  it('--jobs 1 gives the same points as --jobs 2', () => {
    const r = cliSync(['sweep', TINY, '--full', '--out', join(tmp, 'j1'), '--jobs', '1', '--quiet']);
    expect(r.code, r.err).toBe(0);
    expectSameAsReference(pointsOf(join(tmp, 'j1')));
  });

  it('runSweep on the calling thread (no pool) gives the same points as the binary with a pool', async () => {
    // The compiled modules, so that both sides run the same build of the engine.
    // eslint-disable-next-line @typescript-eslint/no-require-imports -- the built file, chosen at run time
    const { runSweep } = require(
      join(ROOT, 'dist', 'sweep', 'run-sweep.js'),
    ) as typeof import('../src/sweep/run-sweep');
    // eslint-disable-next-line @typescript-eslint/no-require-imports -- the built file, chosen at run time
    const { loadScenarioFile } = require(
      join(ROOT, 'dist', 'scenario', 'load.js'),
    ) as typeof import('../src/scenario/load');
    const dir = join(tmp, 'inproc');
    const seen: number[] = [];
    const out = await runSweep(loadScenarioFile(TINY).scenario, {
      outDir: dir,
      inProcess: true,
      full: true,
      onProgress: (d) => seen.push(d),
    });
    expect(out.finished).toBe(TOTAL);
    expect(out.interrupted).toBe(false);
    expect(seen.at(-1)).toBe(TOTAL);
    expectSameAsReference(pointsOf(dir));
  });

  it('killed with -9 midway (plus a torn last line) and resumed: every point once, equal to the uninterrupted run', async () => {
    const dir = join(tmp, 'killed');
    const { child, done } = cliAsync(['sweep', TINY, '--full', '--out', dir, '--jobs', '1', '--quiet']);
    await waitForLines(join(dir, 'points.ndjson'), 2);
    child.kill('SIGKILL');
    const killed = await done;
    expect(killed.signal).toBe('SIGKILL');
    const kept = lineCount(join(dir, 'points.ndjson'));
    expect(kept).toBeGreaterThanOrEqual(2);
    expect(kept).toBeLessThan(TOTAL);
    appendFileSync(join(dir, 'points.ndjson'), '{"index":5,"axes":{"drive.ampl'); // a write cut short
    const r = cliSync(['sweep', TINY, '--full', '--out', dir, '--jobs', '2', '--resume']);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/points\.ndjson:\d+: dropped \(the last line is incomplete/);
    // the killed process left its lock behind; its process id is gone, so the lock is taken over, saying so
    expect(r.err).toMatch(
      new RegExp(`taking over the lock of 'dithercav sweep .*\\(process ${child.pid} .*that process is gone`),
    );
    expect(r.out).toMatch(new RegExp(`${TOTAL}/${TOTAL} points \\(${kept} resumed\\)`));
    expectSameAsReference(pointsOf(dir));
  });

  it('Ctrl-C (SIGINT) stops cleanly with exit 130, finished points and map.json kept; --resume completes it', async () => {
    const dir = join(tmp, 'sigint');
    const { child, done } = cliAsync(['sweep', TINY, '--full', '--out', dir, '--jobs', '1']);
    await waitForLines(join(dir, 'points.ndjson'), 1);
    child.kill('SIGINT');
    const r = await done;
    expect(r.code).toBe(130);
    expect(r.err).toMatch(/stopping: finished points are kept/);
    const points = pointsOf(dir);
    expect(points.size).toBeGreaterThanOrEqual(1);
    const map = JSON.parse(readFileSync(join(dir, 'map.json'), 'utf8'));
    expect(map.finished_points).toBe(points.size);
    const again = cliSync(['sweep', TINY, '--full', '--out', dir, '--jobs', '2', '--resume', '--quiet']);
    expect(again.code, again.err).toBe(0);
    expectSameAsReference(pointsOf(dir));
  });

  it('shards 1/3, 2/3 (from SLURM array variables) and 3/3 merged equal the unsharded sweep', async () => {
    const base = join(tmp, 'sharded');
    const runs = [
      cliAsync(['sweep', TINY, '--full', '--out', base, '--jobs', '1', '--quiet', '--shard', '1/3']),
      // SLURM_ARRAY_TASK_ID 11 of an array 10-12: I = 11 - 10 + 1 = 2, N = 3
      cliAsync(['sweep', TINY, '--full', '--out', base, '--jobs', '1', '--quiet'], {
        SLURM_ARRAY_TASK_ID: '11',
        SLURM_ARRAY_TASK_MIN: '10',
        SLURM_ARRAY_TASK_COUNT: '3',
      }),
      cliAsync(['sweep', TINY, '--full', '--out', base, '--jobs', '1', '--quiet', '--shard', '3/3']),
    ];
    const results = await Promise.all(runs.map((r) => r.done));
    results.forEach((r) => expect(r.code, r.err).toBe(0));
    const dirs = [1, 2, 3].map((i) => join(base, `shard-${i}-of-3`));
    // Shard I holds exactly the indices with index % 3 == I - 1.
    dirs.forEach((d, k) => expect([...pointsOf(d).keys()].sort()).toEqual([k, k + 3]));
    const m = cliSync(['merge', ...dirs, '--out', join(tmp, 'merged')]);
    expect(m.code, m.err).toBe(0);
    expectSameAsReference(pointsOf(join(tmp, 'merged')));
    const mergedMap = JSON.parse(readFileSync(join(tmp, 'merged', 'map.json'), 'utf8'));
    const refMap = JSON.parse(readFileSync(join(tmp, 'ref', 'map.json'), 'utf8'));
    expect(mergedMap.metrics).toEqual(refMap.metrics);
    expect(mergedMap.classes).toEqual(refMap.classes);
    expect(mergedMap.onset_curve).toEqual(refMap.onset_curve);
    expect(existsSync(join(tmp, 'merged', 'report.html'))).toBe(true);
  });

  it('--resume into a folder of another scenario is refused with exit 2, naming sweep.json', () => {
    const other = join(tmp, 'other.yaml');
    writeFileSync(other, readFileSync(TINY, 'utf8').replace('seed: 7', 'seed: 8'));
    const dir = join(tmp, 'ref-copy');
    cpSync(join(tmp, 'ref'), dir, { recursive: true });
    const r = cliSync(['sweep', other, '--out', dir, '--resume', '--quiet']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/sweep\.json: cannot resume here: it holds a sweep of another scenario/);
    expect(r.err).not.toMatch(/^\s+at .+[(:]/m);
  });

  it('a point that fails numerically is recorded with its message and class, the sweep goes on, exit 1', () => {
    const dir = join(tmp, 'fail');
    const r = cliSync(['sweep', FAIL, '--out', dir, '--jobs', '1', '--quiet']);
    expect(r.code).toBe(1);
    const lines = readFileSync(join(dir, 'points.ndjson'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const byIndex = new Map(lines.map((l) => [l.index, l]));
    expect(byIndex.get(0).summary.class).toBe('numerical-failure');
    expect(byIndex.get(0).summary.message).toMatch(/max_steps/);
    expect(byIndex.get(1).summary.status).toBe('ok');
    const map = JSON.parse(readFileSync(join(dir, 'map.json'), 'utf8'));
    expect(map.failed_points).toBe(1);
  });

  it('bad command lines exit 2 with the option named: --jobs 0, --shard 4/3, a scenario without sweep', () => {
    expect(cliSync(['sweep', TINY, '--jobs', '0']).err).toMatch(/--jobs: expected a whole number >= 1/);
    const s = cliSync(['sweep', TINY, '--shard', '4/3']);
    expect(s.code).toBe(2);
    expect(s.err).toMatch(/--shard: expected 1 <= I <= N/);
    const run = join(ROOT, 'test', 'fixtures', 'sweep', 'batch', 'a-run.yaml');
    const n = cliSync(['sweep', run, '--out', join(tmp, 'nosweep')]);
    expect(n.code).toBe(2);
    expect(n.err).toMatch(/a-run\.yaml: sweep: expected a sweep section/);
  });
});
