/**
 * `dithercav batch` on a folder (test/fixtures/sweep/batch) holding a run, a sweep in a
 * subfolder, a broken scenario and a file that is not a scenario: the broken one is
 * reported with its file and key path and skipped, the others finish, index.json lists
 * all three, exit 1; --resume does not run the finished work again.
 * Needs dist/ built (`npm test` builds it first; alone: `npm run build`).
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join, relative, resolve, sep } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cli, requireDist } from './fixtures/cli';

const FOLDER = join('test', 'fixtures', 'sweep', 'batch');
const tmp = scratchDir('batch');

beforeAll(() => {
  requireDist();
});

describe('batch command end to end', () => {
  it('runs the good files, reports the broken one by file and key path, lists all in index.json, exits 1', () => {
    const out = join(tmp, 'b');
    const r = cli('batch', FOLDER, '--out', out, '--jobs', '2');
    expect(r.code, r.err).toBe(1);
    expect(r.err).toMatch(/c-broken\.yaml:14:5: laser\.gain\.pump_ratoi: unknown key/);
    expect(r.err).not.toMatch(/^\s+at .+[(:]/m);
    const index = JSON.parse(readFileSync(join(out, 'index.json'), 'utf8'));
    // Sorted by path; notes.txt is not a scenario file and is not listed. Paths are
    // relative to the batch folder, so a moved or shared batch folder still finds them.
    const rel = (f: string) => relative(out, f).split(sep).join('/');
    expect(index.map((e: { file: string }) => e.file)).toEqual([
      rel(join(FOLDER, 'a-run.yaml')),
      rel(join(FOLDER, 'c-broken.yaml')),
      rel(join(FOLDER, 'nested', 'b-sweep.yaml')),
    ]);
    for (const e of index) expect(existsSync(resolve(out, e.file)), e.file).toBe(true);
    const [run, broken, sweep] = index;
    expect(run).toMatchObject({
      name: 'tiny-run',
      kind: 'run',
      status: 'ok',
      folder: 'tiny-run',
      error: null,
    });
    expect(typeof run.class).toBe('string');
    expect(Number.isFinite(run.enhancement)).toBe(true);
    expect(broken.status).toBe('bad-input');
    expect(broken.folder).toBeNull();
    expect(broken.error).toMatch(/c-broken\.yaml.*laser\.gain\.pump_ratoi/);
    expect(sweep).toMatchObject({
      name: 'tiny-batch-sweep',
      kind: 'sweep',
      status: 'ok',
      folder: 'tiny-batch-sweep',
      error: null,
    });
    expect(sweep.points).toMatchObject({ finished: 2, failed: 0, total: 2 });
    for (const f of ['summary.json', 'report.html'])
      expect(existsSync(join(out, 'tiny-run', f)), f).toBe(true);
    for (const f of ['points.ndjson', 'map.json', 'map.csv', 'sweep.json'])
      expect(existsSync(join(out, 'tiny-batch-sweep', f)), f).toBe(true);
    // index.json carries the gap power and the drive of each entry, copied from its own results
    const runSummary = JSON.parse(readFileSync(join(out, 'tiny-run', 'summary.json'), 'utf8'));
    expect(run.external_mean_W).toBe(runSummary.driven.external_mean_W);
    expect(run.drive).toEqual({
      waveform: runSummary.drive.waveform,
      amplitude_m: runSummary.drive.amplitude_m,
      frequency_Hz: runSummary.drive.frequency_Hz,
    });
    expect('external_mean_stderr_W' in run).toBe(true);
    const version = JSON.parse(readFileSync(join(__dirname, '..', 'package.json'), 'utf8')).version;
    expect(run.tool_version).toBe(version);
    expect(runSummary.tool_version).toBe(version);
    const map = JSON.parse(readFileSync(join(out, 'tiny-batch-sweep', 'map.json'), 'utf8'));
    expect(map.tool_version).toBe(version);
    // map.csv: a header and one row per grid point
    const csv = readFileSync(join(out, 'tiny-batch-sweep', 'map.csv'), 'utf8')
      .trim()
      .split('\r\n');
    expect(csv.length).toBe(1 + map.total_points);
    expect(existsSync(join(out, 'index.html'))).toBe(true);
    // The run's folder holds the run of that very file: its hash is the one `check --json` gives for it.
    const summary = JSON.parse(readFileSync(join(out, 'tiny-run', 'summary.json'), 'utf8'));
    const check = JSON.parse(cli('check', join(FOLDER, 'a-run.yaml'), '--json').out);
    expect(summary.scenario_sha256).toBe(check.scenario_sha256);
  });

  it('--resume skips the finished run and sweep (their files are not rewritten) and gives the same index', () => {
    const out = join(tmp, 'b');
    const before = readFileSync(join(out, 'index.json'), 'utf8');
    const runMtime = statSync(join(out, 'tiny-run', 'summary.json')).mtimeMs;
    const pointsBefore = readFileSync(join(out, 'tiny-batch-sweep', 'points.ndjson'), 'utf8');
    const r = cli('batch', FOLDER, '--out', out, '--jobs', '2', '--resume', '--quiet');
    expect(r.code).toBe(1);
    expect(statSync(join(out, 'tiny-run', 'summary.json')).mtimeMs).toBe(runMtime);
    expect(readFileSync(join(out, 'tiny-batch-sweep', 'points.ndjson'), 'utf8')).toBe(pointsBefore);
    const strip = (t: string) => JSON.parse(t).map((e: { wall_s: number }) => ({ ...e, wall_s: 0 }));
    expect(strip(readFileSync(join(out, 'index.json'), 'utf8'))).toEqual(strip(before));
  });

  it('exits 2 for a path that does not exist, naming it', () => {
    const r = cli('batch', join(tmp, 'nowhere'), '--out', join(tmp, 'x'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/nowhere: expected a scenario file or a folder of them/);
  });
});
