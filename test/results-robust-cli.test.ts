/**
 * The real binary guarding its results: two sweeps on one folder (one runs, the other is
 * refused naming the first), a stale lock taken over, a batch run twice into a folder
 * inside its own input (finds the same scenarios and nothing else), `--out` at an
 * existing file refused before any simulation, `report` refusing damaged or nonsensical
 * summary.json and map.json (exit 2, key path, no report written), and Ctrl-C on `run`
 * saying what was kept. The expectations are the contract of README "Where results go".
 * Needs dist/ built (`npm test` builds it first; alone: `npm run build`).
 */
import { spawn, spawnSync } from 'node:child_process';
import type { ChildProcess } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  makeRunArtifacts,
  makeSweepMap,
  writeRunFolder,
  writeSweepFolder,
} from './fixtures/report/make-fixtures';

const ROOT = resolve(__dirname, '..');
const BIN = join(ROOT, 'bin', 'dithercav.js');
const TINY = join(ROOT, 'test', 'fixtures', 'sweep', 'tiny-sweep.yaml');
const TINY_RUN = join(ROOT, 'test', 'fixtures', 'sweep', 'batch', 'a-run.yaml');
const DEMO = join(ROOT, 'scenarios', 'demo.yaml');
const TOTAL = 6;
let tmp = '';

interface Result {
  code: number | null;
  signal: NodeJS.Signals | null;
  out: string;
  err: string;
}

function cliSync(args: string[]): Result {
  const r = spawnSync(process.execPath, [BIN, ...args], {
    cwd: ROOT,
    encoding: 'utf8',
    env: { ...process.env, NO_COLOR: '1', CI: '1' },
  });
  return { code: r.status, signal: r.signal, out: r.stdout, err: r.stderr };
}

function cliAsync(args: string[]): { child: ChildProcess; done: Promise<Result> } {
  const child = spawn(process.execPath, [BIN, ...args], {
    cwd: ROOT,
    env: { ...process.env, NO_COLOR: '1', CI: '1' },
  });
  let out = '';
  let err = '';
  child.stdout!.on('data', (d) => (out += d));
  child.stderr!.on('data', (d) => (err += d));
  const done = new Promise<Result>((res) =>
    child.on('close', (code, signal) => res({ code, signal, out, err })),
  );
  return { child, done };
}

/** Point indices of points.ndjson, in file order (a repeated index shows up twice). */
function indicesOf(dir: string): number[] {
  return readFileSync(join(dir, 'points.ndjson'), 'utf8')
    .split('\n')
    .filter((l) => l !== '')
    .map((l) => (JSON.parse(l) as { index: number }).index);
}

async function waitFor(cond: () => boolean, what: string, timeout_ms = 60_000): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeout_ms) throw new Error(`no ${what} after ${timeout_ms} ms`);
    await new Promise((r) => setTimeout(r, 25));
  }
}

beforeAll(() => {
  if (!existsSync(join(ROOT, 'dist', 'cli', 'main.js')))
    throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
  tmp = mkdtempSync(join(tmpdir(), 'dithercav-robust-'));
});
afterAll(() => {
  if (tmp) rmSync(tmp, { recursive: true, force: true });
});

describe('one writer per output folder', () => {
  it('two sweeps started together on one folder: one runs, the other exits 2 naming it; then --resume works, every point once', async () => {
    const dir = join(tmp, 'twice');
    // --full: every point of the grid, so "every point once" is the whole grid
    const a = cliAsync(['sweep', TINY, '--out', dir, '--jobs', '1', '--full', '--quiet']);
    const b = cliAsync(['sweep', TINY, '--out', dir, '--jobs', '1', '--full', '--quiet']);
    const [ra, rb] = await Promise.all([a.done, b.done]);
    const codes = [ra.code, rb.code].sort();
    expect(codes, `${ra.err}\n${rb.err}`).toEqual([0, 2]);
    const [winner, loser] = ra.code === 0 ? [a, rb] : [b, ra];
    expect(loser.err).toMatch(
      new RegExp(
        `dithercav\\.lock: this folder is being written by 'dithercav sweep .*tiny-sweep\\.yaml.*' \\(process ${winner.child.pid} on host `,
      ),
    );
    expect(loser.out).toBe(''); // refused before any work: no summary line
    expect(indicesOf(dir).sort((x, y) => x - y)).toEqual([...Array(TOTAL).keys()]);
    expect(existsSync(join(dir, 'dithercav.lock'))).toBe(false); // released at the end
    const again = cliSync(['sweep', TINY, '--out', dir, '--jobs', '2', '--resume', '--full', '--quiet']);
    expect(again.code, again.err).toBe(0);
    expect(again.out).toMatch(new RegExp(`${TOTAL}/${TOTAL} points \\(${TOTAL} resumed\\)`));
    expect(indicesOf(dir).sort((x, y) => x - y)).toEqual([...Array(TOTAL).keys()]);
  });

  it('a stale lock (its process id no longer exists) is taken over with a warning', () => {
    const dir = join(tmp, 'stale');
    mkdirSync(dir, { recursive: true });
    const gone = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], {
      encoding: 'utf8',
    });
    const pid = Number(gone.stdout);
    writeFileSync(
      join(dir, 'dithercav.lock'),
      JSON.stringify({
        host: hostname(),
        pid,
        started: '2026-01-01T00:00:00.000Z',
        command: 'dithercav run x',
      }),
    );
    const r = cliSync(['run', TINY_RUN, '--out', dir, '--quiet']);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(
      new RegExp(
        `warning: .*dithercav\\.lock: taking over the lock of 'dithercav run x' \\(process ${pid} .*that process is gone`,
      ),
    );
    expect(existsSync(join(dir, 'summary.json'))).toBe(true);
    expect(existsSync(join(dir, 'dithercav.lock'))).toBe(false);
  });

  it('a lock of another host is refused (exit 2, --force named) before any work', () => {
    const dir = join(tmp, 'other-host');
    mkdirSync(dir, { recursive: true });
    writeFileSync(
      join(dir, 'dithercav.lock'),
      JSON.stringify({
        host: 'node-far-away',
        pid: 12,
        started: '2026-01-01T00:00:00.000Z',
        command: 'dithercav sweep y',
      }),
    );
    const r = cliSync(['sweep', TINY, '--out', dir, '--quiet']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/locked by 'dithercav sweep y' \(process 12 on host node-far-away.*--force/);
    expect(existsSync(join(dir, 'points.ndjson'))).toBe(false);
  });
});

describe('batch never reads results as scenarios', () => {
  it('run twice into a folder inside its input: the second run finds the same scenarios and nothing else', () => {
    const input = join(tmp, 'batch-in');
    mkdirSync(input, { recursive: true });
    cpSync(TINY_RUN, join(input, 'a-run.yaml'));
    const out = join(input, 'results');
    const first = cliSync(['batch', input, '--out', out, '--jobs', '1', '--quiet']);
    expect(first.code, first.err).toBe(0);
    const firstIndex = JSON.parse(readFileSync(join(out, 'index.json'), 'utf8')) as {
      file: string;
      status: string;
    }[];
    expect(firstIndex.map((e) => e.file)).toEqual(['../a-run.yaml']);
    expect(existsSync(join(out, 'dithercav-results.txt'))).toBe(true);
    expect(existsSync(join(out, 'tiny-run', 'dithercav-results.txt'))).toBe(true);
    const second = cliSync(['batch', input, '--out', out, '--jobs', '1', '--quiet', '--resume']);
    expect(second.code, second.err).toBe(0);
    expect(second.err).not.toMatch(/unknown key|bad input/);
    expect(second.err).toMatch(/batch: skipped 1 folder\(s\): .*results \(this batch's output folder\)/);
    const secondIndex = JSON.parse(readFileSync(join(out, 'index.json'), 'utf8')) as {
      file: string;
      status: string;
    }[];
    expect(secondIndex.map((e) => [e.file, e.status])).toEqual(firstIndex.map((e) => [e.file, e.status]));
  });

  it('an input folder with no scenarios (only results) exits 2 and writes no index', () => {
    const input = join(tmp, 'only-results');
    writeRunFolder(join(input, 'old'), makeRunArtifacts());
    writeFileSync(join(input, 'old', 'dithercav-results.txt'), 'This folder holds dithercav results.\n');
    const out = join(tmp, 'only-results-out');
    const r = cliSync(['batch', input, '--out', out]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(
      /found none under .*only-results \(skipped 1 folder\(s\): .*old \(holds dithercav results\)\)/,
    );
    expect(existsSync(join(out, 'index.json'))).toBe(false);
  });
});

describe('destinations checked before any work', () => {
  it('--out at an existing file exits 2 naming the path and the reason, before any simulation', () => {
    const file = join(tmp, 'a-file');
    writeFileSync(file, 'not a folder');
    const r = cliSync(['run', DEMO, '--out', file]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--out: cannot write results to .*a-file: it is a file, not a folder/);
    expect(r.out).toBe(''); // no run table: nothing was simulated
    expect(readFileSync(file, 'utf8')).toBe('not a folder');
    for (const cmd of [['sweep', TINY]]) {
      const c = cliSync([...cmd, '--out', file]);
      expect(c.code, cmd[0]).toBe(2);
      expect(c.err, cmd[0]).toMatch(/it is a file, not a folder/);
    }
  });

  it("--out inside the package's own code folders is refused", () => {
    const r = cliSync(['run', DEMO, '--out', join(ROOT, 'dist', 'my-results')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/inside dithercav's own install folder/);
    expect(existsSync(join(ROOT, 'dist', 'my-results'))).toBe(false);
  });
});

describe('report refuses damaged or nonsensical results', () => {
  const cases: [string, string, (text: string) => string, RegExp][] = [
    ['summary.json', 'empty', () => '', /summary\.json: .*found an empty file/],
    ['summary.json', 'truncated', (t) => t.slice(0, t.length >> 1), /summary\.json: .*does not parse/],
    [
      'summary.json',
      'wrong-typed',
      (t) => JSON.stringify({ ...JSON.parse(t), driven: { ...JSON.parse(t).driven, hops_per_s: 'many' } }),
      /summary\.json: driven\.hops_per_s: expected a number, found the text "many"/,
    ],
    ['map.json', 'empty', () => '', /map\.json: .*found an empty file/],
    ['map.json', 'truncated', (t) => t.slice(0, t.length >> 1), /map\.json: .*does not parse/],
    [
      'map.json',
      'wrong-typed',
      (t) => JSON.stringify({ ...JSON.parse(t), finished_points: -3 }),
      /map\.json: finished_points: expected a value >= 0, found number -3/,
    ],
  ];
  for (const [file, how, damage, expected] of cases) {
    it(`${how} ${file}: exit 2 with the file and key path, no report written`, () => {
      const dir = join(tmp, `report-${file}-${how}`);
      if (file === 'summary.json') writeRunFolder(dir, makeRunArtifacts());
      else writeSweepFolder(dir, makeSweepMap({ nA: 3, nF: 2 }));
      writeFileSync(join(dir, file), damage(readFileSync(join(dir, file), 'utf8')));
      const r = cliSync(['report', dir]);
      expect(r.code, r.err).toBe(2);
      expect(r.err).toMatch(expected);
      expect(r.err).not.toMatch(/^\s+at .+[(:]/m);
      expect(existsSync(join(dir, 'report.html'))).toBe(false);
    });
  }
});

describe('Ctrl-C on run', () => {
  it('says what was kept and exits 130; nothing half-written is left as a result', async () => {
    const dir = join(tmp, 'ctrl-c');
    const { child, done } = cliAsync(['run', DEMO, '--out', dir]);
    // the lock appears when the command has checked its folder and is about to simulate
    await waitFor(() => existsSync(join(dir, 'dithercav.lock')), 'lock file');
    await new Promise((r) => setTimeout(r, 300));
    child.kill('SIGINT');
    const r = await done;
    expect(r.code).toBe(130);
    expect(r.err).toMatch(
      /dithercav run: stopped: .*No result was written to .*ctrl-c: a run folder is written whole/,
    );
    expect(r.err).toMatch(/press Ctrl-C again to quit at once/);
    expect(existsSync(join(dir, 'summary.json'))).toBe(false);
    expect(existsSync(join(dir, 'dithercav.lock'))).toBe(false);
  });

  it('a second Ctrl-C ends it at once, still with exit 130', async () => {
    const dir = join(tmp, 'ctrl-c-twice');
    const { child, done } = cliAsync(['run', DEMO, '--out', dir]);
    await waitFor(() => existsSync(join(dir, 'dithercav.lock')), 'lock file');
    await new Promise((r) => setTimeout(r, 300));
    child.kill('SIGINT');
    child.kill('SIGINT');
    const r = await done;
    expect(r.code).toBe(130);
    expect(existsSync(join(dir, 'summary.json'))).toBe(false);
  });
});
