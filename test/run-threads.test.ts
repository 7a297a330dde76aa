/**
 * A run spread over threads (src/simulate/parallel-run.ts, docs/model.md §4.2) gives the
 * summary of the one-thread run, and the round-trip engine's lanes are independent of
 * how they are grouped; the static reference's extrapolated stop (docs/model.md §4.1).
 */
import { describe, expect, it } from 'vitest';
import { executeLanes, laneGroups, planRun, runScenario, computeReferences } from '../src/simulate/run';
import { runScenarioThreaded } from '../src/simulate/parallel-run';
import { aitkenLimit } from '../src/simulate/references';
import { deriveAll } from '../src/physics/derive';
import { laserInput, scenario, slowDriveScenario } from './fixtures/engine/build';
import { LORENTZ_10GHZ } from './fixtures/engine/roundtrip';

// homogeneous Lorentzian gain 10 GHz wide on a 10 cm laser: a band the round-trip engine
// steps cheaply
const GAIN = LORENTZ_10GHZ;

/** A strongly coupled gap on the round-trip engine, 8 rest offsets (two lane groups), short windows. */
function coupled() {
  return scenario({
    laser: laserInput({ cavity_length: '10 cm', R1: 0.999, R2: 0.95, gain: GAIN }),
    external: {
      length: '4 cm',
      return_mirror: { reflectivity: 0.9, loss: 0, radius: 'flat' },
      feedback_efficiency: 1,
      roundtrip_efficiency: 1,
    },
    drive: { waveform: 'sine', amplitude: '300 nm', frequency: '2 MHz' },
    simulation: {
      engine: 'roundtrip',
      drive_offsets: 8,
      periods: 4,
      static_positions: 8,
      settle: '1 us',
      seed: 5,
    },
    analysis: { detection_bandwidth: '2 MHz', target_error: 1 },
  });
}

/** A summary without its timing (wall-clock figures differ from run to run). */
function withoutTiming(summary: Record<string, unknown>) {
  const { timing: _timing, ...rest } = summary;
  return rest;
}

describe('threaded run', () => {
  it('gives the one-thread summary apart from timing', async () => {
    const s = coupled();
    const one = runScenario(s).summary;
    const two = (await runScenarioThreaded(s, { threads: 2 })).summary;
    expect(one.status).toBe('ok');
    expect(one.engine).toBe('roundtrip');
    expect(one.driven!.offsets_used).toBe(8);
    // the same lanes on the same noise streams from the same state: equal to the last bit
    expect(withoutTiming(two as unknown as Record<string, unknown>)).toEqual(
      withoutTiming(one as unknown as Record<string, unknown>),
    );
  });

  it('gives the one-thread summary on the slow-drive path (speed points and window lane groups as tasks)', async () => {
    // 8 rest offsets: two lane groups per turning-point window
    const base = slowDriveScenario('4 kHz', 'speedcurve');
    const s = { ...base, simulation: { ...base.simulation, drive_offsets: 8 } };
    const one = runScenario(s);
    const two = await runScenarioThreaded(s, { threads: 2 });
    expect(one.summary.status).toBe('ok');
    expect(one.summary.engine).toBe('speedcurve');
    expect(one.summary.driven!.offsets_used).toBe(8);
    // every point and window part starts from the free-running state on its own noise stream
    expect(withoutTiming(two.summary as unknown as Record<string, unknown>)).toEqual(
      withoutTiming(one.summary as unknown as Record<string, unknown>),
    );
    const points = (c: typeof one.speed_curve) =>
      c ? [...c.forward, ...c.backward].map((q) => [q.speed_m_s, q.external_mean_W]) : null;
    expect(points(two.speed_curve)).toEqual(points(one.speed_curve));
  });

  it('steps each round-trip lane the same whichever lanes share its engine', () => {
    const s = coupled();
    const { derived, params } = deriveAll(s);
    const refs = computeReferences(s);
    const plan = planRun(s, params, derived, refs, {});
    const offsets = plan.laneOffsets_m;
    const all = executeLanes(
      s,
      params,
      derived,
      refs,
      plan,
      offsets,
      0,
      offsets.map((_, i) => i),
      () => {},
    );
    // lanes 2 and 5 alone, each in an engine of its own
    for (const i of [2, 5]) {
      const alone = executeLanes(s, params, derived, refs, plan, [offsets[i]], 0, [i], () => {});
      const mine = all.offsets.find((o) => o.offset_m === offsets[i])!;
      expect(alone.offsets[0].external.mean).toBe(mine.external.mean);
      expect(alone.offsets[0].laserOutput.mean).toBe(mine.laserOutput.mean);
    }
    expect(laneGroups(10)).toEqual([
      [0, 1, 2, 3],
      [4, 5, 6, 7],
      [8, 9],
    ]);
  });
});

describe('extrapolated static mean', () => {
  it("Aitken's delta-squared limit is exact on a geometric sequence and refuses a non-contracting one", () => {
    // m_k = L + c q^k: Aitken's delta-squared process returns L exactly (Burden & Faires,
    // Numerical Analysis, 9th ed., section 2.6, Theorem 2.14 and the text before it)
    const L = 0.034;
    const seq = [0, 1, 2].map((k) => ({ mean_W: L + 0.02 * 0.67 ** k }));
    const lim = aitkenLimit(seq)!;
    expect(lim.limit).toBeCloseTo(L, 14);
    expect(lim.ratio).toBeCloseTo(0.67, 14);
    // alternating or growing differences are no geometric convergence: no limit claimed
    expect(aitkenLimit([{ mean_W: 1 }, { mean_W: 2 }, { mean_W: 1.5 }])).toBeNull();
    expect(aitkenLimit([{ mean_W: 1 }, { mean_W: 2 }, { mean_W: 3.5 }])).toBeNull();
  });
});
