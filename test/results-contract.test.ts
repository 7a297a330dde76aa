/**
 * The results room's guarantees, checked without simulating: the one validating reader
 * per file kind (accepts what the writers write, extra keys included; refuses empty,
 * cut-short and wrong-typed files naming the file and key path), the folder lock
 * (exclusive create, stale lock of a dead process taken over with a warning, another
 * host's lock only with force), the result marker the batch scan skips, the output
 * folder check, and points whose run threw recorded as 'error', not as physics.
 * The expectations are the contract itself (src/results/schemas.ts, README "Where
 * results go"), not numbers from our own simulation.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, describe, expect, it, vi } from 'vitest';
import { InputError } from '../src/scenario/errors';
import {
  readRunSummary,
  readSweepMap,
  readSweepHeader,
  readBatchIndex,
  readComparison,
  readBenchReport,
  validate,
} from '../src/results/read';
import { runSummarySchema, sweepMapSchema } from '../src/results/schemas';
import { acquireFolderLock, parseLockInfo, processAlive } from '../src/results/lock';
import { hasResultMarker, writeResultMarker } from '../src/results/marker';
import { checkOutputFolder } from '../src/results/destination';
import { FOLDER_FILES } from '../src/results/files';
import { errorPointSummary, PointWriter, readPoints } from '../src/results/points';
import { scanScenarioFiles } from '../src/sweep/batch';
import { makeRunArtifacts, makeSweepMap, writeBatchFolder } from './fixtures/report/make-fixtures';

const ROOT = resolve(__dirname, '..');
const root = mkdtempSync(join(tmpdir(), 'dithercav-results-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

function folder(name: string): string {
  const d = join(root, name);
  mkdirSync(d, { recursive: true });
  return d;
}

/** The InputError text of a call that must throw one. */
function inputErrorOf(f: () => unknown): string {
  try {
    f();
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return (err as Error).message;
  }
  throw new Error('expected an InputError, nothing was thrown');
}

/** A pid that surely belongs to no running process: a child that has already exited. */
function deadPid(): number {
  const r = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], {
    encoding: 'utf8',
  });
  const pid = Number(r.stdout);
  expect(processAlive(pid)).toBe(false);
  return pid;
}

describe('one validating reader per result file', () => {
  it('reads what the writers write, and lets unknown extra keys through (a newer writer)', () => {
    const d = folder('good-run');
    const s = { ...makeRunArtifacts().summary, stopped_by: 'tolerance', budget: { lane_s: 3 } };
    writeFileSync(join(d, 'summary.json'), JSON.stringify(s));
    const back = readRunSummary(d) as unknown as Record<string, unknown>;
    expect(back.stopped_by).toBe('tolerance');
    const m = folder('good-map');
    writeFileSync(join(m, 'map.json'), JSON.stringify({ ...makeSweepMap({ nA: 3, nF: 2 }), inferred: [] }));
    expect(readSweepMap(m).total_points).toBe(6);
  });

  it('reads the committed example sweep (map.json and sweep.json as the code wrote them)', () => {
    const d = join(ROOT, 'reports', 'example', 'demo-sweep');
    const map = readSweepMap(d);
    const header = readSweepHeader(d)!;
    expect(map.total_points).toBe(header.total_points);
    expect(map.classes.length).toBe(map.total_points);
  });

  it('an empty summary.json: the file named, "empty"', () => {
    const d = folder('empty');
    writeFileSync(join(d, 'summary.json'), '');
    expect(inputErrorOf(() => readRunSummary(d))).toMatch(/empty[/\\]summary\.json: .*found an empty file/);
  });

  it('a summary.json cut short: the file named, "does not parse"', () => {
    const d = folder('cut');
    const text = JSON.stringify(makeRunArtifacts().summary);
    writeFileSync(join(d, 'summary.json'), text.slice(0, Math.floor(text.length / 2)));
    expect(inputErrorOf(() => readRunSummary(d))).toMatch(
      /cut[/\\]summary\.json: .*does not parse.*cut short/,
    );
  });

  it('a wrong-typed or nonsensical summary.json: each key path named with what was found', () => {
    const d = folder('typed');
    const s = makeRunArtifacts().summary as unknown as Record<string, Record<string, unknown>>;
    s.driven.ripple_rel = 'high';
    s.driven.class = 'wobbly';
    s.free_running.output_W = -1;
    writeFileSync(join(d, 'summary.json'), JSON.stringify(s));
    const msg = inputErrorOf(() => readRunSummary(d));
    expect(msg).toMatch(/summary\.json: driven\.ripple_rel: expected a number, found the text "high"/);
    expect(msg).toMatch(
      /summary\.json: driven\.class: expected one of "decoupled", .*found the text "wobbly"/,
    );
    expect(msg).toMatch(/summary\.json: free_running\.output_W: expected a value >= 0, found number -1/);
  });

  it('a summary of some other program (parseable, none of our keys) is refused, not reported as "not computed"', () => {
    const d = folder('foreign');
    writeFileSync(join(d, 'summary.json'), JSON.stringify({ total: 3, items: [] }));
    const msg = inputErrorOf(() => readRunSummary(d));
    expect(msg).toMatch(/summary\.json: not the summary of a run as this dithercav writes it/);
    expect(msg).toMatch(/summary\.json: version: expected a number, found nothing \(the key is missing\)/);
    expect(msg).toMatch(/summary\.json: derived: expected an object, found nothing/);
  });

  it('a map whose arrays do not fit its grid names the key and the count', () => {
    const m = makeSweepMap({ nA: 3, nF: 2 }) as unknown as Record<string, unknown>;
    (m.classes as unknown[]).pop();
    const msg = inputErrorOf(() => validate('map.json', sweepMapSchema, m, 'the map of a sweep'));
    expect(msg).toMatch(/map\.json: classes: expected one entry per grid point \(6\), found 5/);
  });

  it('a map with a wrong-typed metric value or class names the key path', () => {
    const m = makeSweepMap({ nA: 3, nF: 2 }) as unknown as Record<string, unknown>;
    (m.metrics as Record<string, unknown[]>).enhancement[0] = 'big';
    (m.classes as unknown[])[2] = 7;
    const msg = inputErrorOf(() => validate('map.json', sweepMapSchema, m, 'the map of a sweep'));
    expect(msg).toMatch(/map\.json: metrics\.enhancement\[0\]: expected a number, found the text "big"/);
    expect(msg).toMatch(/map\.json: classes\[2\]: expected one of "decoupled", .*found number 7/);
  });

  it('a file from a newer format version is refused, saying so', () => {
    const s = { ...makeRunArtifacts().summary, version: 99 };
    expect(inputErrorOf(() => validate('summary.json', runSummarySchema, s, 'a summary'))).toMatch(
      /version: expected a format version up to 1 \(a newer dithercav wrote this file\), found number 99/,
    );
  });

  it('a batch index with a folder outside the batch folder is refused', () => {
    const d = folder('batch-escape');
    writeFileSync(
      join(d, 'index.json'),
      JSON.stringify([{ file: 'a.yaml', name: 'a', kind: 'run', status: 'ok', folder: '../elsewhere' }]),
    );
    expect(inputErrorOf(() => readBatchIndex(d))).toMatch(
      /index\.json: \[0\]\.folder: expected a folder inside/,
    );
    const ok = folder('batch-ok');
    const written = writeBatchFolder(ok);
    expect(readBatchIndex(ok).length).toBe(written.length);
  });

  it('compare.json and bench.json readers refuse a file missing their core keys', () => {
    const d = folder('compare');
    writeFileSync(join(d, 'compare.json'), JSON.stringify({ version: 1, rows: 'none' }));
    expect(inputErrorOf(() => readComparison(d))).toMatch(
      /compare\.json: rows: expected a list, found the text "none"/,
    );
    const b = join(folder('bench'), 'bench.json');
    writeFileSync(b, JSON.stringify({ version: 1, date: 'today' }));
    expect(inputErrorOf(() => readBenchReport(b))).toMatch(/bench\.json: machine: expected an object/);
  });

  it('points.ndjson: a line breaking the contract is dropped with its key path; an error point is kept', () => {
    const f = join(folder('points'), 'points.ndjson');
    const w = new PointWriter(f);
    w.write({
      index: 0,
      axes: { 'drive.amplitude': 1e-9 },
      summary: errorPointSummary('boom', 'Error: boom\n    at x'),
      wall_s: 0,
    });
    w.close();
    writeFileSync(
      f,
      `${readFileSync(f, 'utf8')}{"index":1,"axes":{},"summary":{"status":"fine"},"wall_s":0}\n`,
    );
    const r = readPoints(f);
    expect(r.records.map((x) => x.summary.status)).toEqual(['error']);
    expect(r.records[0].summary.stack).toContain('at x');
    expect(r.dropped).toHaveLength(1);
    expect(r.dropped[0].line).toBe(2);
    expect(r.dropped[0].reason).toMatch(
      /summary\.status: expected one of "ok", "numerical-failure", "error"/,
    );
  });
});

describe('the folder lock', () => {
  it('a second writer is refused with exit code 2, naming the holder and what to do', () => {
    const d = folder('lock-live');
    const first = acquireFolderLock(d, { command: 'dithercav sweep a.yaml' });
    const info = parseLockInfo(readFileSync(join(d, FOLDER_FILES.lock), 'utf8'))!;
    expect(info).toMatchObject({ host: hostname(), pid: process.pid, command: 'dithercav sweep a.yaml' });
    let err: unknown;
    try {
      acquireFolderLock(d, { command: 'dithercav sweep b.yaml' });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).exitCode).toBe(2);
    expect((err as Error).message).toMatch(
      new RegExp(
        `being written by 'dithercav sweep a\\.yaml' \\(process ${process.pid} on host .*--resume.*another --out`,
      ),
    );
    first.release();
    expect(existsSync(join(d, FOLDER_FILES.lock))).toBe(false);
    acquireFolderLock(d, { command: 'again' }).release();
  });

  it('a stale lock (same host, process gone) is taken over with a warning', () => {
    const d = folder('lock-stale');
    const pid = deadPid();
    writeFileSync(
      join(d, FOLDER_FILES.lock),
      JSON.stringify({
        host: hostname(),
        pid,
        started: '2026-01-01T00:00:00Z',
        command: 'dithercav run old.yaml',
      }),
    );
    const warnings: string[] = [];
    const lock = acquireFolderLock(d, {
      command: 'dithercav run new.yaml',
      onWarning: (m) => warnings.push(m),
    });
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(
      new RegExp(
        `taking over the lock of 'dithercav run old\\.yaml' \\(process ${pid}.*that process is gone`,
      ),
    );
    expect(parseLockInfo(readFileSync(lock.file, 'utf8'))!.pid).toBe(process.pid);
    lock.release();
  });

  it("another host's lock is never taken silently: refused without force, taken with force and a warning", () => {
    const d = folder('lock-other-host');
    const foreign = {
      host: 'node-elsewhere-17',
      pid: 4242,
      started: '2026-01-01T00:00:00Z',
      command: 'dithercav batch x',
    };
    writeFileSync(join(d, FOLDER_FILES.lock), JSON.stringify(foreign));
    expect(inputErrorOf(() => acquireFolderLock(d, { command: 'me' }))).toMatch(
      /locked by 'dithercav batch x' \(process 4242 on host node-elsewhere-17.*cannot be checked from host.*--force/,
    );
    const warnings: string[] = [];
    const lock = acquireFolderLock(d, { command: 'me', force: true, onWarning: (m) => warnings.push(m) });
    expect(warnings.join('\n')).toMatch(/on another host \(--force\)/);
    lock.release();
  });

  it('release leaves a lock alone that is no longer ours (taken over with --force elsewhere)', () => {
    const d = folder('lock-replaced');
    const lock = acquireFolderLock(d, { command: 'me' });
    const other = JSON.stringify({ host: 'h2', pid: 7, started: 'x', command: 'other' });
    writeFileSync(lock.file, other);
    lock.release();
    expect(readFileSync(lock.file, 'utf8')).toBe(other);
  });
});

describe('result marker and batch scan', () => {
  it("skips the batch's own output and any folder holding results, listing each with the reason", () => {
    const input = folder('scan');
    writeFileSync(join(input, 'a.yaml'), 'name: a\n');
    mkdirSync(join(input, 'out', 'a'), { recursive: true });
    writeFileSync(join(input, 'out', 'index.json'), '[]');
    writeFileSync(join(input, 'out', 'a', 'summary.json'), '{}');
    mkdirSync(join(input, 'old-run'));
    writeFileSync(join(input, 'old-run', 'summary.json'), '{}');
    writeResultMarker(join(input, 'old-run'), 'run');
    expect(hasResultMarker(join(input, 'old-run'))).toBe(true);
    const scan = scanScenarioFiles([input], [join(input, 'out')]);
    expect(scan.files).toEqual([join(input, 'a.yaml')]);
    expect(scan.skipped).toEqual([
      { path: join(input, 'old-run'), reason: 'holds dithercav results' },
      { path: join(input, 'out'), reason: "this batch's output folder" },
    ]);
  });
});

describe('output folder check', () => {
  it('refuses a path that is a file, or under a file, naming it and why', () => {
    const f = join(folder('dest'), 'taken.txt');
    writeFileSync(f, 'x');
    expect(inputErrorOf(() => checkOutputFolder(f))).toMatch(
      /--out: cannot write results to .*taken\.txt: it is a file, not a folder/,
    );
    expect(inputErrorOf(() => checkOutputFolder(join(f, 'sub')))).toMatch(
      /taken\.txt is a file, not a folder/,
    );
  });

  it("refuses the package's own code folders, and anything inside an installed package", () => {
    expect(inputErrorOf(() => checkOutputFolder(join(ROOT, 'dist', 'x')))).toMatch(
      /inside dithercav's own install folder/,
    );
    const installed = folder(join('node_modules', 'dithercav'));
    expect(
      inputErrorOf(() => checkOutputFolder(join(installed, 'reports', 'r'), '--out', installed)),
    ).toMatch(/own install folder/);
    // a folder of one's own (here a fresh one under the temporary folder) is fine
    expect(() => checkOutputFolder(join(root, 'fresh', 'deeper'))).not.toThrow();
  });

  it.skipIf(process.getuid?.() === 0)(
    'refuses a folder that cannot be written (not checkable as root)',
    () => {
      const d = folder('readonly');
      spawnSync('chmod', ['555', d]);
      expect(inputErrorOf(() => checkOutputFolder(join(d, 'out')))).toMatch(/readonly is not writable/);
      spawnSync('chmod', ['755', d]);
    },
  );
});

describe('a point whose run throws is an error, not a numerical failure', () => {
  it('is recorded with status error, message and stack; the map holds null there; the outcome counts it', async () => {
    vi.resetModules();
    vi.doMock('../src/simulate/run', async (orig) => {
      const real = await orig<typeof import('../src/simulate/run')>();
      return {
        ...real,
        runScenario: (
          s: Parameters<typeof real.runScenario>[0],
          o?: Parameters<typeof real.runScenario>[1],
        ) => {
          // a programming error at one point of the grid (the largest amplitude)
          if (s.drive.amplitude > 5e-8)
            throw new TypeError('cannot read properties of undefined (reading "x")');
          return real.runScenario(s, o);
        },
      };
    });
    const { runSweep } = await import('../src/sweep/run-sweep');
    const { loadScenarioFile } = await import('../src/scenario/load');
    const s = loadScenarioFile(join(ROOT, 'test', 'fixtures', 'sweep', 'tiny-sweep.yaml')).scenario;
    const dir = folder('error-point');
    const out = await runSweep(s, { outDir: dir, inProcess: true });
    vi.doUnmock('../src/simulate/run');
    const errs = readPoints(join(dir, 'points.ndjson')).records.filter((r) => r.summary.status === 'error');
    expect(errs.length).toBeGreaterThan(0);
    expect(out.errors).toBe(errs.length);
    for (const r of errs) {
      expect(r.summary.class).toBe('error');
      expect(r.summary.message).toMatch(/cannot read properties of undefined/);
      expect(r.summary.stack).toMatch(/TypeError: .*\n\s+at /);
      expect(out.map.classes[r.index]).toBeNull();
      expect(out.map.class_reasons[r.index]).toMatch(/^error: cannot read/);
    }
    expect(out.map.classes.filter((c) => c === 'numerical-failure')).toHaveLength(0);
  });
});

describe('what a stopped run says it kept', () => {
  it('names the phase it stopped in and that no result was written', async () => {
    const { interruptedRunMessage } = await import('../src/cli/commands/run');
    expect(interruptedRunMessage('out/x', 'driven run', 0.62)).toMatch(
      /^stopped: the free-running and static references had finished; the driven run was interrupted \(62 % of the run\)\. No result was written to out\/x/,
    );
    expect(interruptedRunMessage('out/x', 'references', 0.2)).toMatch(
      /interrupted during the references \(20 % of the run\); the driven run had not started/,
    );
    expect(interruptedRunMessage('out/x', null, 0)).toMatch(/before the simulation had started/);
  });
});

describe('the exit code of a sweep with error points', () => {
  it('is 1 when a point threw, even with no numerical failure, and says so', async () => {
    const { sweepExitCode, sweepEndLines } = await import('../src/cli/commands/sweep');
    expect(sweepExitCode({ failed: 0, errors: 1, interrupted: false })).toBe(1);
    expect(sweepExitCode({ failed: 2, errors: 0, interrupted: false })).toBe(1);
    expect(sweepExitCode({ failed: 0, errors: 0, interrupted: false })).toBe(0);
    expect(sweepEndLines('sweep x', { failed: 0, errors: 1, interrupted: false })).toEqual([
      'sweep x: 1 point(s) stopped on an error, not a numerical failure (status error, message and stack in points.ndjson): please report it',
    ]);
  });
});

describe('merge of a shard still being written', () => {
  it('warns that the shard is locked by a live writer and merges what is finished', async () => {
    const { makeHeader, writeHeader } = await import('../src/results/sweep-header');
    const { mergeShards } = await import('../src/sweep/merge');
    const { failedPointSummary } = await import('../src/results/points');
    const axes = [{ key: 'drive.amplitude', values: [1e-9, 2e-9], scale: 'linear' as const }];
    const d = folder('merge-live-shard');
    writeHeader(
      d,
      makeHeader({
        name: 'm',
        scenario_sha256: 'a'.repeat(64),
        scenario: {},
        source: null,
        axes,
        total_points: 2,
        shard: { index: 1, count: 2 },
      }),
    );
    const w = new PointWriter(join(d, 'points.ndjson'));
    w.write({ index: 0, axes: { 'drive.amplitude': 1e-9 }, summary: failedPointSummary('x'), wall_s: 0 });
    w.close();
    const lock = acquireFolderLock(d, { command: 'dithercav sweep m.yaml --shard 1/2' });
    const warnings: string[] = [];
    const out = mergeShards([d], {
      outDir: join(root, 'merge-live-out'),
      onWarning: (m) => warnings.push(m),
    });
    lock.release();
    expect(out.records).toHaveLength(1);
    expect(warnings.join('\n')).toMatch(
      new RegExp(
        `is still being written by 'dithercav sweep m\\.yaml --shard 1/2' \\(process ${process.pid}`,
      ),
    );
  });
});
