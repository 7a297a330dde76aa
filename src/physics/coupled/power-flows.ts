/**
 * The slots of LaneEngine.powerFlows (docs/model.md §6): instantaneous power flows of one
 * lane, W, summed over the laser modes. Every time-domain engine fills the same slots with
 * the same meaning, so the power budget is computed the same way whichever engine ran.
 *
 * Notation: |E|^2 one-way laser power at M2 (sum over modes), G_m = gamma_c N_m the modal
 * gain rate, tau_L the laser round trip; a the gap's forward field leaving M2, b the field
 * returning to M2, a_del the forward field that b was reflected from (a(t - tau) in a delay
 * line, a itself in a mean-field engine); eta = eta_fb factor(x)^2 the instantaneous
 * feedback efficiency (params.couplingAt), eta_rt, T_gap, R3, T3, A3 as in the parameters.
 *
 * Sinks (disjoint; their sum balances SUPPLY up to the interface mismatch, see below):
 *   REAR_THROUGH    through M1:                       w_T1 (C - T2 |E|^2)
 *   MIRROR_LOSS     absorbed/scattered in M1, M2, M3:  (w_A1 + w_A2) (C - T2 |E|^2) + A2 |b|^2
 *                                                     + A3 T_gap |a_del|^2
 *   INTERNAL_LOSS   the laser's intracavity loss:      w_int (C - T2 |E|^2)
 *   UNMATCHED       laser light outside the gap mode:  (1 - eta) T2 |E|^2
 *   RETURNED_LOST   light back through M2 that misses the laser mode: (1 - eta) T2 |b|^2;
 *                   when the laser ignores its feedback, what the ideal isolator takes:
 *                   T2 |b|^2 + 2 r2 t2 sqrt(eta) Re(E* b) (the change of the light M2 sends
 *                   back, its interference with the laser's own reflection included)
 *   RETURN_THROUGH  through M3 (a detector behind it): T3 T_gap |a_del|^2
 *   GAP_ELEMENT     lost in the gap element, both passes: (1 - T_gap) (1 + R3 T_gap) |a_del|^2
 *   GAP_CLIPPING    the per-round-trip loss eta_rt:    (1 - eta_rt) R3 T_gap^2 |a_del|^2
 * with C = gamma_c tau_L |E|^2 the laser equation's cold-cavity loss. |E|^2 is the power
 * at M2, so T2 |E|^2 leaves through M2 exactly; the rest of C is shared among M1's
 * transmission and loss, M2's loss and the internal loss in proportion to their
 * single-pass -ln survivals (w_T1 = -ln R1 T1 / (1 - R1), w_A1 = -ln R1 A1 / (1 - R1),
 * w_A2 = -ln R2 A2 / (1 - R2), w_int = -2 ln(1 - l), normalised to sum 1).
 *
 * Flows that are not sinks:
 *   SUPPLY          the gain's supply tau_L sum_m G_m |E_m|^2 (spontaneous emission left out)
 *   LASER_OUTPUT    net power leaving the laser through M2: (1 - eta) T2 |E|^2 + |a|^2 - |b|^2
 *                   (T2 |E|^2 without a gap)
 *   GAP_ONE_WAY     one-way gap power |a|^2
 *
 * Closure: in a steady state, SUPPLY - (sum of sinks) equals the interface mismatch at M2
 * (eta T2 |b|^2 - (1 - r2) 2 t2 sqrt(eta) Re(E* b): what the exact field returns to the
 * laser minus what the modal laser equation takes up, docs/model.md §3.3), and is zero
 * when the laser ignores its feedback. Over a finite window the change of stored energy
 * adds to it.
 */
export const FLOW_SUPPLY = 0;
export const FLOW_REAR_THROUGH = 1;
export const FLOW_MIRROR_LOSS = 2;
export const FLOW_INTERNAL_LOSS = 3;
export const FLOW_UNMATCHED = 4;
export const FLOW_RETURNED_LOST = 5;
export const FLOW_RETURN_THROUGH = 6;
export const FLOW_GAP_ELEMENT = 7;
export const FLOW_GAP_CLIPPING = 8;
export const FLOW_LASER_OUTPUT = 9;
export const FLOW_GAP_ONE_WAY = 10;
/** length of the array powerFlows fills */
export const FLOW_COUNT = 11;

/** The slots that are sinks (summed for the closure). */
export const FLOW_SINKS: readonly number[] = [
  FLOW_REAR_THROUGH,
  FLOW_MIRROR_LOSS,
  FLOW_INTERNAL_LOSS,
  FLOW_UNMATCHED,
  FLOW_RETURNED_LOST,
  FLOW_RETURN_THROUGH,
  FLOW_GAP_ELEMENT,
  FLOW_GAP_CLIPPING,
];

/** Shares of the laser's cold loss other than T2 |E|^2 (see the file comment). */
export interface ColdLossShares {
  rearThrough: number;
  mirrorLoss: number;
  internal: number;
}

/** w_T1, w_A1 + w_A2 and w_int of the file comment, from the laser's mirrors and loss. */
export function coldLossShares(p: {
  R1: number;
  T1: number;
  A1: number;
  R2: number;
  A2: number;
  internalLoss: number;
}): ColdLossShares {
  const ln1 = p.R1 < 1 ? -Math.log(p.R1) / (1 - p.R1) : 1;
  const ln2 = p.R2 < 1 ? -Math.log(p.R2) / (1 - p.R2) : 1;
  const t1 = ln1 * p.T1;
  const a = ln1 * p.A1 + ln2 * p.A2;
  const int = p.internalLoss > 0 ? -2 * Math.log(1 - p.internalLoss) : 0;
  const sum = t1 + a + int;
  // nothing but M2's transmission loses light: the log-vs-linear remainder of C is M2's
  // own (-ln R2 > T2); it is booked with the mirror losses
  if (!(sum > 0)) return { rearThrough: 0, mirrorLoss: 1, internal: 0 };
  return { rearThrough: t1 / sum, mirrorLoss: a / sum, internal: int / sum };
}
