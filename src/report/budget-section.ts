/**
 * The run report's peak intensities (shown right under the laser-safety caution) and its
 * power budget table (docs/model.md §6), from summary.peak_intensity and summary.budget.
 * Summaries written before these existed show "not computed".
 */
import type { RunSummary } from '../results/summary';
import { fmtNum, fmtPercent, fmtSI, isNum, NOT_COMPUTED } from './format';
import { html, SafeHtml } from './safe-html';

/** W/m^2 as W/cm^2, the unit laser-safety limits are usually read in. */
export function fmtWcm2(v: unknown): string {
  return isNum(v) ? `${fmtNum(v / 1e4, 3)} W/cm²` : NOT_COMPUTED;
}

/** The peak intensities, for the top of the page beside the safety caution. */
export function intensityNote(s: RunSummary): SafeHtml {
  const pk = s.peak_intensity;
  if (!pk) return html``;
  return html`<aside class="caution" role="note" aria-label="Peak intensity">
    <p class="caution-title">Peak intensity in this design</p>
    <table>
      <tr>
        <th>at the waist in the gap</th>
        <td class="num">${fmtWcm2(pk.gap_waist_W_m2)}</td>
      </tr>
      <tr>
        <th>on the return mirror</th>
        <td class="num">${fmtWcm2(pk.return_mirror_W_m2)}</td>
      </tr>
      <tr>
        <th>on the output coupler</th>
        <td class="num">${fmtWcm2(pk.output_coupler_W_m2)}</td>
      </tr>
    </table>
    <p>
      From the full-band peak one-way gap power ${fmtSI(pk.peak_gap_power_W, 'W')} (laser intracavity peak
      ${fmtSI(pk.peak_intracavity_W, 'W')}) and the standing-wave factor ${fmtNum(pk.standing_wave_factor)}
      (forward and returning waves adding at the antinodes): an upper bound for coating and sample exposure.
    </p>
  </aside>`;
}

const BUDGET_ROWS: [key: string, label: string][] = [
  ['supply', "gain's supply"],
  ['through_rear_mirror', 'through the rear mirror M1'],
  ['mirror_losses', 'absorbed and scattered in M1, M2, M3'],
  ['internal_loss', "laser's internal loss"],
  ['unmatched', 'laser light outside the gap mode'],
  ['returned_lost', 'returned light missing the laser mode'],
  ['through_return_mirror', 'through the return mirror M3 (a detector behind it)'],
  ['gap_element_loss', 'lost in the gap element (a sample cell)'],
  ['gap_clipping', 'per-round-trip loss in the gap (round-trip efficiency)'],
];

/** The power budget table, with each mean's standard error and the closure. */
export function budgetSection(s: RunSummary): SafeHtml {
  const b = s.budget as unknown as Record<string, number> | null | undefined;
  const body = !b
    ? html`<p class="note">Power budget: ${NOT_COMPUTED} (no time-stepped driven run).</p>`
    : html`<table>
          <tr>
            <th></th>
            <th>mean</th>
            <th>standard error</th>
            <th>of supply</th>
          </tr>
          ${BUDGET_ROWS.map(
            ([k, label]) =>
              html`<tr>
                <th>${label}</th>
                <td class="num">${fmtSI(b[`${k}_W`], 'W')}</td>
                <td class="num">${fmtSI(b[`${k}_stderr_W`], 'W')}</td>
                <td class="num">
                  ${isNum(b.supply_W) && b.supply_W > 0 ? fmtPercent(b[`${k}_W`] / b.supply_W) : ''}
                </td>
              </tr>`,
          )}
          <tr>
            <th>net laser output through M2 (a flow, not a sink)</th>
            <td class="num">${fmtSI(b.laser_output_W, 'W')}</td>
            <td class="num">${fmtSI(b.laser_output_stderr_W, 'W')}</td>
            <td></td>
          </tr>
          <tr>
            <th>one-way gap power (a flow, not a sink)</th>
            <td class="num">${fmtSI(b.gap_one_way_W, 'W')}</td>
            <td class="num">${fmtSI(b.gap_one_way_stderr_W, 'W')}</td>
            <td></td>
          </tr>
          <tr>
            <th>closure: (supply - sinks) / supply</th>
            <td class="num">${fmtPercent(b.closure_rel)}</td>
            <td></td>
            <td></td>
          </tr>
        </table>
        <p class="note">
          Means over the analysis window of every rest offset; standard errors from ${fmtNum(b.batches)} batch
          means. The closure is the mismatch at the output coupler between the laser equation and the gap's
          fields plus the change of stored energy (docs/model.md §6); it is small only where that mismatch is.
        </p>`;
  return html`<section id="budget">
    <h2>Power budget</h2>
    ${body}
  </section>`;
}
