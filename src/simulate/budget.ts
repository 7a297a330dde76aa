/**
 * The power budget of a driven run (docs/model.md §6): the engine's instantaneous power
 * flows (LaneEngine.powerFlows, slots in power-flows.ts) averaged over the analysis
 * window of every lane, each mean with its standard error, and the closure against the
 * gain's supply.
 *
 * Standard error: the window of each lane is cut into equal batches (whole drive periods
 * where there is a drive, at most 32 per lane); the batch means of all lanes are the
 * samples, so the error holds the spread over rest offsets and over time (batch means,
 * e.g. Law and Kelton, Simulation Modeling and Analysis, ch. 9).
 */
import {
  FLOW_COUNT,
  FLOW_GAP_CLIPPING,
  FLOW_GAP_ELEMENT,
  FLOW_GAP_ONE_WAY,
  FLOW_INTERNAL_LOSS,
  FLOW_LASER_OUTPUT,
  FLOW_MIRROR_LOSS,
  FLOW_REAR_THROUGH,
  FLOW_RETURN_THROUGH,
  FLOW_RETURNED_LOST,
  FLOW_SINKS,
  FLOW_SUPPLY,
  FLOW_UNMATCHED,
} from '../physics/coupled/power-flows';
import type { PeakIntensity, PowerBudget } from '../results/summary';

/** The summary key of each flow slot (CONTRACT 0.2 names first). */
const KEYS: [number, string][] = [
  [FLOW_RETURN_THROUGH, 'through_return_mirror'],
  [FLOW_GAP_ELEMENT, 'gap_element_loss'],
  [FLOW_MIRROR_LOSS, 'mirror_losses'],
  [FLOW_REAR_THROUGH, 'through_rear_mirror'],
  [FLOW_LASER_OUTPUT, 'laser_output'],
  [FLOW_SUPPLY, 'supply'],
  [FLOW_INTERNAL_LOSS, 'internal_loss'],
  [FLOW_UNMATCHED, 'unmatched'],
  [FLOW_RETURNED_LOST, 'returned_lost'],
  [FLOW_GAP_CLIPPING, 'gap_clipping'],
  [FLOW_GAP_ONE_WAY, 'gap_one_way'],
];

/** Accumulates the flows of every lane over the analysis window. */
export class BudgetAccumulator {
  readonly scratch = new Float64Array(FLOW_COUNT);
  private readonly batches: number;
  private readonly perBatch: number;
  /** sums per (lane, batch, slot) */
  private readonly sums: Float64Array;
  private readonly counts: Float64Array;
  private readonly seen: Float64Array;

  /**
   * @param lanes number of lanes
   * @param samples samples each lane will push
   * @param periods drive periods in the window (null without a drive)
   */
  constructor(
    private readonly lanes: number,
    samples: number,
    periods: number | null,
  ) {
    const b = periods !== null && periods >= 2 ? Math.min(32, Math.floor(periods)) : 8;
    this.batches = Math.max(1, Math.min(b, samples));
    this.perBatch = Math.max(1, samples / this.batches);
    this.sums = new Float64Array(lanes * this.batches * FLOW_COUNT);
    this.counts = new Float64Array(lanes * this.batches);
    this.seen = new Float64Array(lanes);
  }

  /** One sample of lane l: the flows in `flows` (usually this.scratch after powerFlows). */
  push(l: number, flows: Float64Array): void {
    const k = this.seen[l]++;
    const b = Math.min(this.batches - 1, Math.floor(k / this.perBatch));
    const cell = l * this.batches + b;
    this.counts[cell]++;
    const base = cell * FLOW_COUNT;
    for (let s = 0; s < FLOW_COUNT; s++) this.sums[base + s] += flows[s];
  }

  result(): PowerBudget | null {
    const means: number[][] = [];
    for (let cell = 0; cell < this.lanes * this.batches; cell++) {
      const n = this.counts[cell];
      if (n === 0) continue;
      const row: number[] = [];
      for (let s = 0; s < FLOW_COUNT; s++) row.push(this.sums[cell * FLOW_COUNT + s] / n);
      means.push(row);
    }
    if (means.length === 0) return null;
    const n = means.length;
    const out: Record<string, number> = {};
    const closureSamples = means.map((r) => r[FLOW_SUPPLY] - FLOW_SINKS.reduce((a, s) => a + r[s], 0));
    for (const [slot, key] of KEYS) {
      const v = means.map((r) => r[slot]);
      out[`${key}_W`] = mean(v);
      out[`${key}_stderr_W`] = stderr(v);
    }
    const supply = out.supply_W;
    out.sinks_W = FLOW_SINKS.reduce((a, s) => a + mean(means.map((r) => r[s])), 0);
    out.closure_rel = supply > 0 ? mean(closureSamples) / supply : 0;
    out.batches = n;
    return out as unknown as PowerBudget;
  }
}

function mean(v: number[]): number {
  return v.reduce((a, b) => a + b, 0) / v.length;
}

function stderr(v: number[]): number {
  if (v.length < 2) return NaN;
  const m = mean(v);
  const varS = v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1);
  return Math.sqrt(varS / v.length);
}

/** The standing-wave factor: forward and returning waves of equal amplitude add to 2x the field, 4x the intensity. */
export const STANDING_WAVE_FACTOR = 4;

/**
 * Peak intensities (docs/model.md §6) from the full-band peak one-way powers: TEM00 peak
 * intensity 2 P / (pi w^2) (Siegman, Lasers, ch. 17) times the standing-wave factor
 * (up to 4 at the antinodes where the forward and returning waves add in phase). The
 * output coupler sees the larger of the laser's intracavity power and the gap power.
 */
export function peakIntensityOf(
  beams: { gap_waist_m: number | null; radius_at_M3_m: number | null; radius_at_M2_m: number | null },
  peakGap_W: number,
  peakIntracavity_W: number,
): PeakIntensity {
  const at = (w: number | null, P: number) =>
    w !== null && w > 0 && Number.isFinite(P) ? (STANDING_WAVE_FACTOR * 2 * P) / (Math.PI * w * w) : null;
  return {
    gap_waist_W_m2: at(beams.gap_waist_m, peakGap_W),
    return_mirror_W_m2: at(beams.radius_at_M3_m, peakGap_W),
    output_coupler_W_m2: at(beams.radius_at_M2_m, Math.max(peakGap_W, peakIntracavity_W)),
    peak_gap_power_W: peakGap_W,
    peak_intracavity_W: peakIntracavity_W,
    standing_wave_factor: STANDING_WAVE_FACTOR,
  };
}

/**
 * The power budget over several batches of rest offsets (docs/model.md §3.6): each figure
 * the lane-weighted mean of the batches', its standard error combined as independent
 * batches' (sqrt of the sum of (w_k se_k)^2, w_k the batch's share of the lanes).
 */
export function combineBudgets(
  budgets: (PowerBudget | null | undefined)[],
  lanes: number[],
): PowerBudget | null {
  const items = budgets
    .map((b, k) => ({ b, n: lanes[k] }))
    .filter((x): x is { b: PowerBudget; n: number } => x.b !== null && x.b !== undefined);
  if (items.length === 0) return null;
  if (items.length === 1) return items[0].b;
  const total = items.reduce((a, x) => a + x.n, 0);
  const out: Record<string, number> = {};
  for (const [, key] of KEYS) {
    out[`${key}_W`] = items.reduce(
      (a, x) => a + (x.n / total) * (x.b as unknown as Record<string, number>)[`${key}_W`],
      0,
    );
    out[`${key}_stderr_W`] = Math.sqrt(
      items.reduce(
        (a, x) => a + ((x.n / total) * (x.b as unknown as Record<string, number>)[`${key}_stderr_W`]) ** 2,
        0,
      ),
    );
  }
  out.sinks_W = items.reduce((a, x) => a + (x.n / total) * x.b.sinks_W, 0);
  out.closure_rel = out.supply_W > 0 ? (out.supply_W - out.sinks_W) / out.supply_W : 0;
  out.batches = items.reduce((a, x) => a + x.b.batches, 0);
  return out as unknown as PowerBudget;
}
