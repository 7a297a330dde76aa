/**
 * `sweep.json` of a sweep folder: what the sweep is (scenario hash, axes, total, shard), so
 * that `--resume` and `merge` can refuse the points of another scenario.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { InputError } from '../scenario/errors';
import { TOOL_VERSION } from '../version';
import { RESULT_VERSION, SWEEP_FILES } from './files';
import type { MapAxis } from './map';
import { readSweepHeader } from './read';

/** sweep.json: what a sweep folder holds. */
/** One metric compared across a cell's corners, with the scale below which differences are not relative. */
export interface RefineMetric {
  name: string;
  /**
   * the smallest scale the difference is taken relative to: |max - min| is compared with
   * margin x max(floor, largest |value|)
   */
  floor: number;
  /** true when the metric scales with the mean gap power, so its noise is rel_stderr x value */
  powerLike: boolean;
}

export interface RefineSettings {
  /** grid steps between coarse points along each axis (the last grid index is always coarse) */
  coarse_step: number;
  /** relative difference of a compared metric across a cell that makes it split */
  margin: number;
  metrics: RefineMetric[];
  /**
   * differences smaller than this many combined standard errors do not split a cell
   * (2 sqrt 2: two standard errors of the difference of two independent means)
   */
  noise_factor: number;
  /**
   * a cell whose corners share a class but differ in a metric is first probed at its
   * centre: where the corners' interpolation holds there (the same margin and noise rule),
   * the cell is inferred instead of split (absent in sweeps of 0.3.2 and before: no probe)
   */
  centre_probe?: boolean;
}

export interface SweepHeader {
  version: number;
  tool_version: string;
  name: string;
  /** SHA-256 of the normalised scenario, sweep section and engine choice included */
  scenario_sha256: string;
  /** the normalised scenario (canonical JSON form, "flat" for an infinite radius) */
  scenario: Record<string, unknown>;
  /** the scenario file the sweep was started from, as given */
  source: string | null;
  axes: MapAxis[];
  total_points: number;
  /** this folder's share of the grid, or null for the whole grid */
  shard: { index: number; count: number } | null;
  /**
   * the refinement the points were planned with (src/sweep/refine.ts), or null when every
   * point is computed (--full); absent in folders written before refinement (full)
   */
  refine?: RefineSettings | null;
  created: string;
}

/** Build a header. */
export function makeHeader(h: Omit<SweepHeader, 'version' | 'tool_version' | 'created'>): SweepHeader {
  return { version: RESULT_VERSION, tool_version: TOOL_VERSION, created: new Date().toISOString(), ...h };
}

/** Write sweep.json (through a temporary file and a rename). */
export function writeHeader(dir: string, h: SweepHeader): void {
  const file = path.join(dir, SWEEP_FILES.header);
  const tmp = `${file}.tmp-${process.pid}`;
  fs.writeFileSync(tmp, `${JSON.stringify(h, null, 2)}\n`);
  fs.renameSync(tmp, file);
}

/**
 * Read sweep.json of a folder (validated, ./read.ts), or null when there is none. Throws
 * InputError naming the file and key path when it exists but is not a sweep header.
 */
export function readHeader(dir: string): SweepHeader | null {
  return readSweepHeader(dir);
}

/**
 * Refuse to add points to a folder holding another sweep: the scenario hash, the total
 * and the shard must all agree. Throws InputError (exit 2) saying what differs.
 */
export function assertSameSweep(dir: string, existing: SweepHeader, wanted: SweepHeader): void {
  const file = path.join(dir, SWEEP_FILES.header);
  const problems: string[] = [];
  if (existing.scenario_sha256 !== wanted.scenario_sha256) {
    problems.push(
      `it holds a sweep of another scenario or engine choice ('${existing.name}', sha256 ${existing.scenario_sha256.slice(0, 12)}..., this one ${wanted.scenario_sha256.slice(0, 12)}...)`,
    );
  } else if (existing.total_points !== wanted.total_points) {
    problems.push(`it holds ${existing.total_points} grid points, this sweep ${wanted.total_points}`);
  }
  const sh = (s: SweepHeader['shard']) => (s ? `shard ${s.index}/${s.count}` : 'the whole grid');
  if (problems.length === 0 && sh(existing.shard) !== sh(wanted.shard)) {
    problems.push(`it holds ${sh(existing.shard)}, this run is ${sh(wanted.shard)}`);
  }
  if (problems.length > 0) {
    throw new InputError(file, [
      { path: '', message: `cannot resume here: ${problems.join('; ')}. Use another --out folder.` },
    ]);
  }
}
