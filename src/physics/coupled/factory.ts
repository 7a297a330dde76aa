/** One place that builds a lane engine of either kind. */
import { ExactEngine } from './exact';
import { FastEngine } from './fast';
import type { LaneEngine, MirrorMotion, NormalSource } from './lane-engine';
import type { CoupledParams } from './params';

export type EngineKind = 'exact' | 'fast';

export interface EngineSpec {
  kind: EngineKind;
  /** time step, s */
  dt: number;
  /** bound on |offset + x(t)| over the run, m (sizes the exact engine's history) */
  maxExcursion_m: number;
  /** mean-field engine: round-trip factor at the pulled lasing frequency (steady states) */
  pullCorrection?: boolean;
}

export function createLaneEngine(
  spec: EngineSpec,
  p: CoupledParams,
  lanes: number,
  motion: MirrorMotion,
  rng: NormalSource,
): LaneEngine {
  return spec.kind === 'exact'
    ? new ExactEngine(p, lanes, spec.dt, motion, rng, spec.maxExcursion_m)
    : new FastEngine(p, lanes, spec.dt, motion, rng, spec.pullCorrection ?? false);
}
