import { existsSync, mkdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cliSync, distBuilt } from './fixtures/cli';
import { registerReport } from '../src/cli/commands/report';
import { detectResultFolder, rebuildReport } from '../src/report';
import { InputError } from '../src/scenario/errors';
import {
  makeRunArtifacts,
  makeSweepMap,
  writeBatchFolder,
  writeRunFolder,
  writeSweepFolder,
} from './fixtures/report/make-fixtures';

const root = scratchDir('report-cli');

const runDir = join(root, 'run');
const sweepDir = join(root, 'sweep');
const batchDir = join(root, 'batch');
const emptyDir = join(root, 'empty');
writeRunFolder(runDir, makeRunArtifacts());
writeSweepFolder(sweepDir, makeSweepMap({ nA: 4, nF: 3 }));
writeBatchFolder(batchDir);
mkdirSync(emptyDir, { recursive: true });

describe('report folder detection and rebuild', () => {
  it('tells a run, a sweep and a batch folder apart by their files', () => {
    expect(detectResultFolder(runDir)).toBe('run');
    expect(detectResultFolder(sweepDir)).toBe('sweep');
    expect(detectResultFolder(batchDir)).toBe('batch');
    expect(detectResultFolder(emptyDir)).toBeNull();
  });

  it('rebuilds a batch: index.html and the report of every finished member folder', () => {
    const r = rebuildReport(batchDir);
    expect(r.kind).toBe('batch');
    expect(r.written).toEqual([
      join(batchDir, 'index.html'),
      join(batchDir, 'alpha', 'report.html'),
      join(batchDir, 'odd name', 'report.html'),
      join(batchDir, 'map-beta', 'report.html'),
    ]);
    for (const f of r.written) expect(statSync(f).size).toBeGreaterThan(1000);
  });

  it('a folder with none of the result files is bad input naming the folder and what was expected', () => {
    expect(() => rebuildReport(emptyDir)).toThrow(InputError);
    expect(() => rebuildReport(emptyDir)).toThrow(
      `${emptyDir}: expected a run folder (summary.json), a sweep folder (map.json), a comparison folder (compare.json) or a batch folder (index.json), found none of these files`,
    );
    expect(() => rebuildReport(join(root, 'missing'))).toThrow(
      /missing: expected a result folder .*found no such folder/,
    );
  });

  it('the report command registers on a program and rebuilds a run folder', async () => {
    let code = -1;
    const program = new Command().exitOverride();
    registerReport(program, {
      setExit: (c) => {
        code = c;
      },
    });
    const before = existsSync(join(runDir, 'report.html'))
      ? statSync(join(runDir, 'report.html')).mtimeMs
      : 0;
    await program.parseAsync(['node', 'dithercav', 'report', runDir]);
    expect(code).toBe(0);
    expect(statSync(join(runDir, 'report.html')).mtimeMs).toBeGreaterThanOrEqual(before);
    expect(readFileSync(join(runDir, 'report.html'), 'utf8')).toContain('<h1>layout-fixture-run</h1>');
  });
});

// The real binary, as users run it (needs the compiled dist/, which `npm test` builds first).
const built = distBuilt();
if (!built)
  console.warn('report-cli: dist/ is not built, the binary tests are skipped (run `npm run build`)');

describe.skipIf(!built && process.env.CI !== 'true')('dithercav report (binary)', () => {
  const run = (dir: string) => cliSync(['report', dir], {}, 60_000);

  it('rebuilds a sweep report without simulating, exit 0', () => {
    rmSync(join(sweepDir, 'report.html'), { force: true });
    const r = run(sweepDir);
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    expect(r.out).toContain(`wrote ${join(sweepDir, 'report.html')}`);
    expect(existsSync(join(sweepDir, 'report.html'))).toBe(true);
  });

  it('exits 2 with a message naming the folder for a folder that holds no results', () => {
    const r = run(emptyDir);
    expect(r.code).toBe(2);
    expect(r.err).toContain(
      `${emptyDir}: expected a run folder (summary.json), a sweep folder (map.json), a comparison folder (compare.json) or a batch folder (index.json)`,
    );
    expect(r.err).not.toMatch(/\n\s+at /); // no stack trace
  });
});
