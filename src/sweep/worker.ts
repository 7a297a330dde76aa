/**
 * The work one pool thread does: run one sweep point (its references cached per thread)
 * or one whole scenario (batch). The same function serves the in-process
 * executor, so a point's result does not depend on where it ran.
 *
 * Loaded by piscina from the compiled dist/sweep/worker.js (default export).
 */
import type { Scenario } from '../scenario/schema';
import { InputError } from '../scenario/errors';
import { computeReferences, runScenario } from '../simulate';
import type { References } from '../simulate';
import type { RunArtifacts } from '../results/artifacts';
import { errorPointSummary, pointSummaryOf } from '../results/points';
import type { PointRecord } from '../results/points';
import type { SpeedCurve } from '../results/speed-curve';

/**
 * One sweep point. Points with the same `referenceKey` share their free-running and
 * static references: each thread computes them once per key and keeps the last few
 * (References hold functions, so they cannot be sent between threads).
 */
export interface PointTask {
  type: 'point';
  index: number;
  axes: Record<string, number>;
  scenario: Scenario;
  /** referenceKey(scenario), computed by the caller */
  referenceKey: string;
}

/** One whole run (a batch entry without a sweep); returns everything it wrote. */
export interface RunTask {
  type: 'run';
  scenario: Scenario;
}

export type SweepTask = PointTask | RunTask;

/** What each task returns. */
export type TaskResult<T extends SweepTask> = T extends PointTask ? PointRecord : RunArtifacts;

/** References kept per thread; a sweep dispatches points grouped by key, so a few suffice. */
export const REFERENCE_CACHE_SIZE = 4;
const referenceCache = new Map<string, References>();

/**
 * The references for a point: from this thread's cache, else computed from the point's
 * own scenario (which, having the same key, gives the same references as any other
 * point of its group) and cached, the oldest entry evicted.
 */
function referencesFor(task: PointTask): References {
  const hit = referenceCache.get(task.referenceKey);
  if (hit) {
    referenceCache.delete(task.referenceKey);
    referenceCache.set(task.referenceKey, hit);
    return hit;
  }
  const refs = computeReferences(task.scenario);
  referenceCache.set(task.referenceKey, refs);
  while (referenceCache.size > REFERENCE_CACHE_SIZE)
    referenceCache.delete(referenceCache.keys().next().value as string);
  return refs;
}

/**
 * Speed curves (slow-drive path, docs/model.md §3.6) kept per thread by reference key: a
 * run checks the curve's own key, reuses its points and extends it to the speeds it needs.
 */
const speedCurveCache = new Map<string, SpeedCurve>();

function messageOf(err: unknown): string {
  if (err instanceof InputError) return `bad input: ${err.message}`;
  if (err instanceof Error) return err.message || err.name;
  return String(err);
}

/**
 * Run one point. A run that returns status 'numerical-failure' (its integration failed)
 * becomes a record of class 'numerical-failure' with its message: a failed point is
 * data, and the sweep goes on. A run that throws is not physics but a program error (or
 * bad input the checks missed): status and class 'error', with the message and the stack,
 * so the sweep can report it and exit 1. `wall_s` is the run's wall-clock time.
 */
export function runPointTask(task: PointTask): PointRecord {
  const t0 = process.hrtime.bigint();
  let summary;
  try {
    const art = runScenario(task.scenario, {
      references: referencesFor(task),
      speedCurve: speedCurveCache.get(task.referenceKey) ?? null,
    });
    if (art.speed_curve) {
      speedCurveCache.delete(task.referenceKey);
      speedCurveCache.set(task.referenceKey, art.speed_curve);
      while (speedCurveCache.size > REFERENCE_CACHE_SIZE)
        speedCurveCache.delete(speedCurveCache.keys().next().value as string);
    }
    summary = pointSummaryOf(art.summary);
  } catch (err) {
    summary = errorPointSummary(messageOf(err), err instanceof Error ? (err.stack ?? null) : null);
  }
  const wall_s = Number(process.hrtime.bigint() - t0) / 1e9;
  return { index: task.index, axes: task.axes, summary, wall_s };
}

/** Do one task (see SweepTask); a run may throw, a point never does. */
export function runTask(task: SweepTask): PointRecord | RunArtifacts {
  switch (task.type) {
    case 'point':
      return runPointTask(task);
    case 'run':
      return runScenario(task.scenario);
  }
}

/** piscina's entry point. */
export default function handle(task: SweepTask): PointRecord | RunArtifacts {
  return runTask(task);
}
