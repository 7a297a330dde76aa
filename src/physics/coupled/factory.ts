/** One place that builds a lane engine of either kind. */
import { ExactEngine } from './exact';
import { FastEngine } from './fast';
import { RoundTripEngine, roundTripStepFor } from './roundtrip';
import type { LaneEngine, MirrorMotion, NormalSource } from './lane-engine';
import type { CoupledParams } from './params';

export type EngineKind = 'exact' | 'fast' | 'roundtrip';

export interface EngineSpec {
  kind: EngineKind;
  /** time step, s */
  dt: number;
  /** bound on |offset + x(t)| over the run, m (sizes the exact engine's history) */
  maxExcursion_m: number;
  /** mean-field engine: round-trip factor at the pulled lasing frequency (steady states) */
  pullCorrection?: boolean;
  /** round-trip engine: one noise stream per lane instead of `rng` shared in lane order */
  laneNoise?: readonly NormalSource[];
}

export function createLaneEngine(
  spec: EngineSpec,
  p: CoupledParams,
  lanes: number,
  motion: MirrorMotion,
  rng: NormalSource,
): LaneEngine {
  if (spec.kind === 'roundtrip') {
    // the round-trip engine's step is fixed by its delay lines (docs/model.md §3.5)
    const step = roundTripStepFor(p);
    if (Math.abs(step.dt - spec.dt) > 1e-9 * step.dt)
      throw new Error(`round-trip engine: step ${spec.dt} s requested, its own is ${step.dt} s`);
    const e = new RoundTripEngine(p, lanes, motion, rng, spec.maxExcursion_m, step);
    if (spec.laneNoise) e.setLaneNoise(spec.laneNoise);
    return e;
  }
  if (spec.laneNoise) throw new Error(`the ${spec.kind} engine draws one noise stream for all lanes`);
  return spec.kind === 'exact'
    ? new ExactEngine(p, lanes, spec.dt, motion, rng, spec.maxExcursion_m)
    : new FastEngine(p, lanes, spec.dt, motion, rng, spec.pullCorrection ?? false);
}
