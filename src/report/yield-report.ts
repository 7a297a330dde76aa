/**
 * The report of a tolerance yield (report.html in a yield folder), from yield.json alone:
 * the yield, the percentiles, a histogram of the draws' mean gap power and the sensitivity
 * ranking with its method (docs/model.md §7). It never re-simulates.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { InputError } from '../scenario/errors';
import { YIELD_FILES, YieldSummary } from '../results/yield';
import { fmtNum, fmtPercent, fmtSI, NOT_COMPUTED } from './format';
import { axis, baseLayout, plotDiv, PlotSpec, renderPage } from './html';
import { html } from './safe-html';

/** The yield page as an HTML string. */
export function buildYieldReportHtml(y: YieldSummary, generatedAt: Date = new Date()): string {
  const plots: PlotSpec[] = [];
  const h = y.histogram;
  if (h.counts.length > 0) {
    plots.push({
      id: 'yield-histogram',
      data: [
        {
          type: 'bar',
          x: h.counts.map((_, i) => 0.5 * (h.edges_W[i] + h.edges_W[i + 1])),
          y: h.counts,
          width: h.counts.map((_, i) => 0.95 * (h.edges_W[i + 1] - h.edges_W[i])),
          name: 'draws',
        },
        ...(y.gap_power_floor_W !== null
          ? [
              {
                type: 'scatter',
                mode: 'lines',
                x: [y.gap_power_floor_W, y.gap_power_floor_W],
                y: [0, Math.max(...h.counts)],
                name: 'gap power floor',
                line: { dash: 'dash', color: '#c2571a' },
              },
            ]
          : []),
      ],
      layout: baseLayout({
        xaxis: axis('mean gap power (W)'),
        yaxis: axis('draws'),
        title: { text: 'Mean gap power of the draws' },
      }),
    });
  }
  const pctRow = (label: string, rec: Record<string, number | null>, f: (v: unknown) => string) =>
    html`<tr>
      <th>${label}</th>
      ${Object.values(rec).map((v) => html`<td class="num">${f(v)}</td>`)}
    </tr>`;
  const body = html`<section id="yield">
      <h2>Yield</h2>
      <table>
        <tr>
          <th>draws finished / planned</th>
          <td class="num">${fmtNum(y.draws_finished)} / ${fmtNum(y.draws_planned)}</td>
        </tr>
        <tr>
          <th>decoupled</th>
          <td class="num">${fmtPercent(y.yield_decoupled)}</td>
        </tr>
        <tr>
          <th>
            mean gap power at least
            ${y.gap_power_floor_W === null ? 'a floor (none set)' : fmtSI(y.gap_power_floor_W, 'W')}
          </th>
          <td class="num">
            ${y.yield_above_floor === null ? NOT_COMPUTED : fmtPercent(y.yield_above_floor)}
          </td>
        </tr>
        <tr>
          <th>both</th>
          <td class="num">${y.yield_both === null ? NOT_COMPUTED : fmtPercent(y.yield_both)}</td>
        </tr>
        <tr>
          <th>failed numerically</th>
          <td class="num">${fmtNum(y.draws_failed)}</td>
        </tr>
      </table>
      <h3>Percentiles over the draws</h3>
      <table>
        <tr>
          <th></th>
          ${Object.keys(y.gap_power_percentiles_W).map((k) => html`<th>${k}</th>`)}
        </tr>
        ${pctRow('mean gap power', y.gap_power_percentiles_W, (v) => fmtSI(v, 'W'))}
        ${pctRow('ripple in band', y.ripple_percentiles, (v) => fmtNum(v, 3))}
      </table>
      ${plotDiv('yield-histogram', `${fmtNum(y.draws_finished)} draws, seed ${fmtNum(y.seed)}`)}
    </section>
    <section id="sensitivity">
      <h2>Which tolerances drive the spread</h2>
      <p class="note">Method: ${y.ranking_method}.</p>
      <table>
        <tr>
          <th>key</th>
          <th>spread</th>
          <th>rank correlation with gap power</th>
          <th>with ripple</th>
        </tr>
        ${y.ranking.map((r) => {
          const t = y.tolerances.find((k) => k.key === r.key);
          return html`<tr>
            <th><code>${r.key}</code></th>
            <td class="num">
              ${t ? `${t.distribution} ${fmtNum(t.spread, 3)} (SI) around ${fmtNum(t.nominal, 6)}` : ''}
            </td>
            <td class="num">${r.rho_gap_power === null ? 'did not vary' : fmtNum(r.rho_gap_power, 3)}</td>
            <td class="num">${r.rho_ripple === null ? 'did not vary' : fmtNum(r.rho_ripple, 3)}</td>
          </tr>`;
        })}
      </table>
      <p class="note">Every draw with its values and results: ${YIELD_FILES.csv}.</p>
    </section>`;
  return renderPage({
    kind: 'yield',
    title: `${y.name} — dithercav yield`,
    heading: y.name,
    subheading: `tolerance yield over ${y.draws_finished} draws`,
    body,
    plots,
    footer: `Written by dithercav from ${YIELD_FILES.summary} on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/** Read DIR/yield.json and write DIR/report.html; returns the path. */
export function writeYieldReport(dir: string): string {
  const file = join(dir, YIELD_FILES.summary);
  let y: YieldSummary;
  try {
    y = JSON.parse(readFileSync(file, 'utf8')) as YieldSummary;
  } catch (err) {
    throw new InputError(file, [
      { path: '', message: `expected a yield summary (JSON): ${(err as Error).message}` },
    ]);
  }
  const out = join(dir, YIELD_FILES.report);
  writeFileSync(out, buildYieldReportHtml(y));
  return out;
}
