/**
 * A fact of the trade, checked in orders of magnitude on a reduced version of
 * scenarios/long-tube-gap.yaml (and its plate variant) with the round-trip engine
 * (docs/model.md §3.5): a red gas laser of a few milliwatts with a tube of about 30 cm,
 * facing a high-finesse gap whose return mirror moves at tens of cm/s to about a metre per
 * second, holds of the order of a watt in the gap, hundreds of times its own output; a
 * clean uncoated glass plate in the gap brings the gap power back down towards the
 * laser's own level. The full runs and their figures are in changes/trade.md.
 *
 * Reduced: 3 rest offsets instead of the run's 16 to 32, 4 drive periods analysed after
 * 2 of settling instead of 20 after 3, no static reference (the rise over the still mirror
 * needs thousands of settled positions on this gap; it is measured by the full run only).
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { RoundTripEngine } from '../src/physics/coupled/roundtrip';
import type { MirrorMotion } from '../src/physics/coupled/lane-engine';
import type { CoupledParams } from '../src/physics/coupled/params';
import { deriveAll } from '../src/physics/derive';
import { createRng } from '../src/numerics/rng';
import { loadScenarioFile } from '../src/scenario/load';
import { freeRunningRoundTrip, type FreeRunningResult } from '../src/simulate/references';

const ROOT = join(__dirname, '..');

function load(file: string) {
  return loadScenarioFile(join(ROOT, 'scenarios', file)).scenario;
}

/**
 * Mean gap power (one-way, at M2) over `lanes` rest offsets spread over half a wavelength,
 * the mirror on the scenario's sine, each lane started from the free-running laser `free`.
 */
function drivenGap(
  p: CoupledParams,
  free: FreeRunningResult,
  amplitude: number,
  frequency: number,
  halfWavelength: number,
): number {
  const w = 2 * Math.PI * frequency;
  const motion: MirrorMotion = {
    position: (t) => amplitude * Math.sin(w * t),
    velocity: (t) => amplitude * w * Math.cos(w * t),
  };
  const lanes = 3;
  const e = new RoundTripEngine(p, lanes, motion, createRng(2), amplitude + halfWavelength);
  e.setLaserState(free.Er, free.Ei, free.N);
  // one offset inside each third of half a wavelength (fixed fractions: the test repeats)
  [0.21, 0.47, 0.83].forEach((f, l) => (e.offset[l] = ((l + f) / lanes) * halfWavelength));
  const period = 1 / frequency;
  const settle = Math.round((2 * period) / e.dt);
  const analysed = Math.round((4 * period) / e.dt);
  let k = 0;
  let sum = 0;
  e.advance(settle + analysed, (en) => {
    if (k++ < settle) return;
    for (let l = 0; l < lanes; l++) sum += en.externalPower(l);
  });
  expect(e.failed).toBe(false);
  return sum / (lanes * analysed);
}

describe('a fact of the trade: the dithered high-finesse gap of a red gas laser', () => {
  it('holds of the order of a watt, hundreds of times the laser output; a glass plate brings it down to within a decade of the laser output', () => {
    const empty = load('long-tube-gap.yaml');
    const plate = load('long-tube-gap-plate.yaml');
    const half = empty.laser.wavelength / 2;
    const pEmpty = deriveAll(empty).params;
    // one laser in both (only the gap differs): its free-running state serves both
    const free = freeRunningRoundTrip(pEmpty, createRng(1));
    const output = free.output_W;
    const run = (s: typeof empty, p: CoupledParams) =>
      drivenGap(p, free, s.drive.amplitude, s.drive.frequency, half);
    const gapEmpty = run(empty, pEmpty);
    const gapPlate = run(plate, deriveAll(plate).params);
    // the premise: a laser of a few milliwatts (1 to 10 mW) on this engine
    expect(output).toBeGreaterThan(1e-3);
    expect(output).toBeLessThan(10e-3);
    // common practice, no source: "of the order of a watt" in the gap. Half a decade either
    // side (0.32 to 3.2 W) is what "of the order of" allows; the reduced run's three
    // offsets spread by about 15 % around the full run's mean (1.42 W), far inside it.
    expect(gapEmpty).toBeGreaterThan(0.32);
    expect(gapEmpty).toBeLessThan(3.2);
    // common practice, no source: "hundreds of times its own output" (100 to 1000)
    expect(gapEmpty / output).toBeGreaterThan(100);
    expect(gapEmpty / output).toBeLessThan(1000);
    // common practice, no source: the plate brings the gap power back "near the laser's own
    // level". The model holds about 5 times the laser output (full run 5.06; the phase
    // average of the gap's Airy response alone is T2 / (1 - R2 R3 T_gap^2) = 6.2 times the
    // output, Siegman, Lasers, ch. 11), so only the order of magnitude is checked: within a
    // decade of the laser output (0.1 to 10), and more than ten times below the empty gap.
    expect(gapPlate / output).toBeGreaterThan(0.1);
    expect(gapPlate / output).toBeLessThan(10);
    expect(gapPlate).toBeLessThan(gapEmpty / 10);
  });
});
