/**
 * Joining the shard folders of one sweep into one folder: points.ndjson (sorted by
 * index), sweep.json (the whole grid) and map.json. Shards of different scenarios are
 * refused; a point found in two shards must be the same in both.
 */
import * as fs from 'node:fs';
import { mapToCsv } from '../analysis/csv';
import { keyUnit } from '../scenario/kinds';
import * as path from 'node:path';
import { InputError } from '../scenario/errors';
import type { InputProblem } from '../scenario/errors';
import { scenarioSchema } from '../scenario/schema';
import type { Scenario } from '../scenario/schema';
import type { SweepMap } from '../results/map';
import { buildSweepMap, withOperatingPoint } from './map';
import { relativeSource } from './run-sweep';
import type { PointRecord } from '../results/points';
import { describeDropped, formatPointLine, readPoints } from '../results/points';
import type { SweepHeader } from '../results/sweep-header';
import { makeHeader, readHeader, writeHeader } from '../results/sweep-header';
import { SWEEP_FILES } from '../results/files';
import { activeLock } from '../results/lock';
import type { RefineSettings } from './refine';

export interface MergeOptions {
  /** output folder; default `<parent of the first folder>/<scenario name>-merged` */
  outDir?: string;
  onWarning?: (message: string) => void;
  /**
   * called with the output folder once it is known, before anything is written there
   * (the CLI checks, locks and marks it); may throw InputError to refuse
   */
  openOut?: (dir: string) => void;
}

export interface MergeOutcome {
  dir: string;
  header: SweepHeader;
  records: PointRecord[];
  map: SweepMap;
  /** grid points no shard holds and the refinement does not infer */
  missing: number;
  /** points found in more than one shard (identical, so kept once) */
  duplicates: number;
}

/** Canonical text of what a point says (its run time left out: it differs between machines). */
function pointIdentity(r: PointRecord): string {
  return JSON.stringify({ index: r.index, axes: r.axes, summary: r.summary });
}

/** The default merged folder: next to the first shard folder, named `<name>-merged`. */
export function defaultMergeDir(firstDir: string, name: string): string {
  return path.join(path.dirname(path.resolve(firstDir)), `${name.replace(/[^A-Za-z0-9._-]+/g, '_')}-merged`);
}

/**
 * Merge shard folders (each with sweep.json and points.ndjson) into one. Throws
 * InputError (exit 2) when a folder holds no sweep, when the folders hold sweeps of
 * different scenarios (scenario hashes differ; the message lists each folder's name and
 * hash), when the output folder is one of the inputs, or when one point index has
 * different results in two shards. Torn last lines are dropped with a warning.
 * Missing points (a shard not given) are allowed: the map holds null there. Shards of a
 * refined sweep give the map of the unsharded refined sweep (src/sweep/refine.ts).
 */
export function mergeShards(dirs: readonly string[], opts: MergeOptions = {}): MergeOutcome {
  const warn = opts.onWarning ?? (() => undefined);
  if (dirs.length === 0)
    throw new InputError(null, [{ path: 'DIR', message: 'expected at least one sweep folder' }]);
  const headers: SweepHeader[] = dirs.map((d) => {
    const h = readHeader(d);
    if (!h)
      throw new InputError(path.join(d, SWEEP_FILES.header), [
        { path: '', message: `expected a sweep folder holding ${SWEEP_FILES.header}, found none` },
      ]);
    return h;
  });
  const hashes = new Set(headers.map((h) => h.scenario_sha256));
  if (hashes.size > 1) {
    const problems: InputProblem[] = dirs.map((d, i) => ({
      path: '',
      message: `${d}: scenario '${headers[i].name}', sha256 ${headers[i].scenario_sha256.slice(0, 16)}...`,
    }));
    throw new InputError(null, [
      {
        path: '',
        message: 'refusing to merge shards of different scenarios (their scenario hashes differ):',
      },
      ...problems,
    ]);
  }
  const first = headers[0];
  const outDir = opts.outDir ?? defaultMergeDir(dirs[0], first.name);
  const resolvedOut = path.resolve(outDir);
  if (dirs.some((d) => path.resolve(d) === resolvedOut)) {
    throw new InputError(null, [
      { path: '--out', message: `expected an output folder other than the shards, found ${outDir}` },
    ]);
  }

  opts.openOut?.(outDir);

  for (const d of dirs) {
    const held = activeLock(d);
    if (held)
      warn(
        `${d} is still being written by '${held.command}' (process ${held.pid} on host ${held.host}): the merge holds only the points finished so far`,
      );
  }

  const byIndex = new Map<number, PointRecord>();
  let duplicates = 0;
  const conflicts: InputProblem[] = [];
  dirs.forEach((d) => {
    const file = path.join(d, SWEEP_FILES.points);
    const read = readPoints(file);
    for (const m of describeDropped(file, read.dropped)) warn(m);
    for (const r of read.records) {
      if (r.index >= first.total_points) {
        conflicts.push({
          path: '',
          message: `${file}: point ${r.index} is outside the grid of ${first.total_points} points`,
        });
        continue;
      }
      const prior = byIndex.get(r.index);
      if (!prior) {
        byIndex.set(r.index, r);
      } else if (pointIdentity(prior) === pointIdentity(r)) {
        duplicates++;
      } else {
        conflicts.push({
          path: '',
          message: `${file}: point ${r.index} differs from the same point in another shard`,
        });
      }
    }
  });
  if (conflicts.length > 0)
    throw new InputError(null, [{ path: '', message: 'refusing to merge:' }, ...conflicts.slice(0, 20)]);
  if (duplicates > 0)
    warn(`${duplicates} point(s) appear in more than one shard with identical results; kept once`);

  const records = [...byIndex.values()].sort((a, b) => a.index - b.index);
  let scenario: Scenario | null = null;
  const parsed = scenarioSchema.safeParse(first.scenario);
  if (parsed.success) scenario = parsed.data;
  else
    warn(
      `the scenario stored in ${path.join(dirs[0], SWEEP_FILES.header)} no longer validates; the map is drawn without its thresholds`,
    );

  // A refined sweep's shards each refine their own coarse cells; the merged map infers with
  // the same settings over the whole grid. Shards of mixed settings are merged without inference.
  const refines = headers.map((h) => JSON.stringify(h.refine ?? null));
  let refine: RefineSettings | null = null;
  if (refines.every((r) => r === refines[0])) refine = headers[0].refine ?? null;
  else
    warn(
      'the shards were planned with different refinement settings (or some with --full); the merged map infers no point',
    );

  fs.mkdirSync(outDir, { recursive: true });
  const header = makeHeader({
    name: first.name,
    scenario_sha256: first.scenario_sha256,
    scenario: first.scenario,
    // source is relative to the folder holding sweep.json: re-base it on the merged folder
    source: first.source === null ? null : relativeSource(outDir, path.resolve(dirs[0], first.source)),
    axes: first.axes,
    total_points: first.total_points,
    shard: null,
    refine,
  });
  const tmp = path.join(outDir, `${SWEEP_FILES.points}.tmp-${process.pid}`);
  fs.writeFileSync(tmp, records.map(formatPointLine).join(''));
  fs.renameSync(tmp, path.join(outDir, SWEEP_FILES.points));
  writeHeader(outDir, header);
  const map = withOperatingPoint(
    buildSweepMap({
      name: first.name,
      scenario_sha256: first.scenario_sha256,
      axes: first.axes,
      records,
      scenario,
      refine,
    }),
    scenario,
  );
  fs.writeFileSync(path.join(outDir, SWEEP_FILES.map), `${JSON.stringify(map)}\n`);
  fs.writeFileSync(path.join(outDir, SWEEP_FILES.mapCsv), mapToCsv(map, keyUnit));
  return {
    dir: outDir,
    header,
    records,
    map,
    missing: first.total_points - records.length - (map.inferred_points ?? 0),
    duplicates,
  };
}
