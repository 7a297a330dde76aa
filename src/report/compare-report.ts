/**
 * The report of a waveform comparison (report.html beside compare.json, written by
 * `dithercav compare` and rebuilt by `dithercav report`): the table of the terminal, the
 * recommendation, and the waveforms side by side: the mirror motion and speed each
 * voltage waveform gives through the actuator's response, drawn from the sinusoidal parts
 * saved in compare.json (a sum of sines, no simulation), with the critical speed of the
 * speed rule for comparison.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { TOOL_VERSION } from '../version';
import { classBadge, classLegend } from './class-style';
import { fmtNum, fmtPercent, fmtRatio, fmtSI, isNum, NOT_COMPUTED } from './format';
import { glossarySection } from './glossary';
import { axis, baseLayout, plotDiv, PlotSpec, renderPage, TRACE_COLOURS } from './html';
import { readComparison } from '../results/read';
import { COMPARE_FILES } from '../results/files';
import { html, plotText, SafeHtml } from './safe-html';

/** The comparison's result file and its report, inside the compare folder. */
export { COMPARE_FILES };

/** Samples per drive period in the drawn waveforms. */
const SAMPLES_PER_PERIOD = 200;
/** Drive periods drawn. */
const PERIODS = 2;

/** The parts of compare.json the report reads (read defensively: the file may come from another version). */
interface ComponentLike {
  label?: string;
  frequency_Hz?: number;
  amplitude_m?: number;
  response_phase_rad?: number;
}
interface RowLike {
  waveform?: string;
  status?: string;
  message?: string | null;
  amplitude_m?: number;
  second_amplitude_m?: number | null;
  second_frequency_Hz?: number | null;
  components?: ComponentLike[];
  peak_speed_m_s?: number;
  critical_speed_m_s?: number | null;
  fraction_below_critical?: number | null;
  fraction_below_critical_time?: number | null;
  gain_over_static?: number | null;
  ripple_rel?: number | null;
  hops_per_period?: number | null;
  current_peak_A?: number | null;
  class?: string | null;
  class_reason?: string | null;
  notes?: string[];
}
interface ComparisonLike {
  tool_version?: string;
  name?: string;
  basis?: string;
  voltage_peak_V?: number | null;
  max_voltage_V?: number | null;
  stroke_m?: number;
  frequency_Hz?: number;
  rows: RowLike[];
  recommendation?: { waveform: string | null; reason: string };
  notes?: string[];
}

/**
 * Mirror position and speed of one waveform over `periods` periods of `f`: the sum of its
 * sinusoidal parts A_k sin(2 pi f_k t + phi_k) (phi_k the actuator's response phase; the
 * voltage parts start in phase) and its derivative.
 */
export function waveformMotion(
  parts: ComponentLike[],
  f: number,
  periods = PERIODS,
  samples = SAMPLES_PER_PERIOD,
): { t: number[]; x: number[]; v: number[] } {
  const n = periods * samples + 1;
  const t: number[] = [];
  const x: number[] = [];
  const v: number[] = [];
  for (let i = 0; i < n; i++) {
    const ti = i / (samples * f);
    let xi = 0;
    let vi = 0;
    for (const p of parts) {
      if (!isNum(p.frequency_Hz) || !isNum(p.amplitude_m)) continue;
      const w = 2 * Math.PI * p.frequency_Hz;
      const ph = isNum(p.response_phase_rad) ? p.response_phase_rad : 0;
      xi += p.amplitude_m * Math.sin(w * ti + ph);
      vi += p.amplitude_m * w * Math.cos(w * ti + ph);
    }
    t.push(ti);
    x.push(xi);
    v.push(vi);
  }
  return { t, x, v };
}

function tableSection(c: ComparisonLike): SafeHtml {
  const basis =
    c.basis === 'equal peak voltage'
      ? `equal peak drive voltage ${fmtSI(c.voltage_peak_V, 'V')}${isNum(c.max_voltage_V) ? ` (actuator.max_voltage ${fmtSI(c.max_voltage_V, 'V')})` : ''}`
      : `equal peak-to-peak stroke ${fmtSI(c.stroke_m, 'm')} (no actuator section, so no voltage to hold equal)`;
  const rec = c.recommendation;
  return html`<section id="comparison">
    <div class="keep">
      <h2>Which waveform decouples better</h2>
      <p class="note">
        Drive ${fmtSI(c.frequency_Hz, 'Hz')}, every waveform at ${basis}; each run against the same
        free-running and still-mirror references.
      </p>
      <table class="compare">
        <thead>
          <tr>
            <th>waveform</th>
            <th class="num">amplitude(s)</th>
            <th class="num">peak speed</th>
            <th class="num">time below the critical speed</th>
            <th class="num">gain over the mirror held still</th>
            <th class="num">in-band ripple</th>
            <th class="num">hops per period</th>
            <th class="num">peak current</th>
            <th>class</th>
          </tr>
        </thead>
        <tbody>
          ${c.rows.map((r) => {
            const frac = r.fraction_below_critical_time ?? r.fraction_below_critical;
            const amps =
              r.waveform === 'two-tone'
                ? `${fmtSI(r.amplitude_m, 'm')} + ${fmtSI(r.second_amplitude_m, 'm')} at ${fmtSI(r.second_frequency_Hz, 'Hz')}`
                : fmtSI(r.amplitude_m, 'm');
            return html`<tr class="${rec && rec.waveform === r.waveform ? 'recommended' : ''}">
              <th>${String(r.waveform ?? '')}${rec && rec.waveform === r.waveform ? ' ★' : ''}</th>
              <td class="num">${amps}</td>
              <td class="num">${fmtSI(r.peak_speed_m_s, 'm/s')}</td>
              <td class="num">${fmtPercent(frac)}</td>
              <td class="num">${fmtRatio(r.gain_over_static)}</td>
              <td class="num">${fmtPercent(r.ripple_rel)}</td>
              <td class="num">${fmtNum(r.hops_per_period)}</td>
              <td class="num">${isNum(r.current_peak_A) ? fmtSI(r.current_peak_A, 'A') : NOT_COMPUTED}</td>
              <td>${r.status === 'ok' ? classBadge(r.class ?? null) : classBadge('numerical-failure')}</td>
            </tr>`;
          })}
        </tbody>
      </table>
    </div>
    <p>
      <b>${rec && rec.waveform ? 'Recommended:' : 'No recommendation:'}</b> ${rec ? rec.reason : NOT_COMPUTED}
    </p>
    ${classLegend()}
    ${(() => {
      const notes = [
        ...c.rows.flatMap((r) => (Array.isArray(r.notes) ? r.notes.map((n) => `${r.waveform}: ${n}`) : [])),
        ...c.rows
          .filter((r) => r.status !== 'ok')
          .map((r) => `${r.waveform}: numerical failure: ${r.message ?? 'unknown'}`),
        ...(Array.isArray(c.notes) ? c.notes : []),
      ];
      return notes.length === 0
        ? ''
        : html`<ul class="note">
            ${notes.map((n) => html`<li>${String(n)}</li>`)}
          </ul>`;
    })()}
  </section>`;
}

function waveformSection(c: ComparisonLike, plots: PlotSpec[]): SafeHtml {
  const f = c.frequency_Hz;
  const rows = c.rows.filter((r) => Array.isArray(r.components) && r.components.length > 0);
  if (!isNum(f) || f <= 0 || rows.length === 0)
    return html`<section id="waveforms">
      <h2>The waveforms side by side</h2>
      <p class="note">The sinusoidal parts of the waveforms were not saved; nothing to draw.</p>
    </section>`;
  const motions = rows.map((r) => ({ r, m: waveformMotion(r.components!, f) }));
  plots.push({
    id: 'compare-position',
    data: motions.map(({ r, m }, i) => ({
      type: 'scatter',
      mode: 'lines',
      name: plotText(String(r.waveform)),
      x: m.t,
      y: m.x,
      line: { color: TRACE_COLOURS[i % TRACE_COLOURS.length], width: 1.8 },
    })),
    layout: baseLayout({
      height: 300,
      xaxis: axis('time (s)'),
      yaxis: axis('mirror position (m)'),
    }),
  });
  const vc = rows.map((r) => r.critical_speed_m_s).find(isNum);
  const speedData: Record<string, unknown>[] = motions.map(({ r, m }, i) => ({
    type: 'scatter',
    mode: 'lines',
    name: plotText(String(r.waveform)),
    x: m.t,
    y: m.v.map(Math.abs),
    line: { color: TRACE_COLOURS[i % TRACE_COLOURS.length], width: 1.8 },
  }));
  if (isNum(vc))
    speedData.push({
      type: 'scatter',
      mode: 'lines',
      name: 'critical speed',
      x: [motions[0].m.t[0], motions[0].m.t[motions[0].m.t.length - 1]],
      y: [vc, vc],
      line: { color: '#111111', width: 1.5, dash: 'dash' },
    });
  plots.push({
    id: 'compare-speed',
    data: speedData,
    layout: baseLayout({
      height: 300,
      xaxis: axis('time (s)'),
      yaxis: axis('mirror speed (m/s)', { rangemode: 'tozero' }),
    }),
  });
  return html`<section id="waveforms">
    <h2>The waveforms side by side</h2>
    <div class="grid2">
      <div>
        ${plotDiv(
          'compare-position',
          `Mirror motion each voltage waveform gives through the actuator's response, over ${PERIODS} periods of the drive, two tones drawn starting in phase. The triangle is drawn as the actuator delivers it (its odd harmonics to the 9th through the response), which can differ from the ideal triangle of the table's amplitude that the run used; the notes above say by how much.`,
          'Mirror position',
        )}
      </div>
      <div>
        ${plotDiv(
          'compare-speed',
          `Speed of the same motions${isNum(vc) ? `; dashed: the critical speed ${fmtSI(vc, 'm/s')} of the speed rule, below which the rule expects the laser to follow the mirror` : ''}.`,
          'Mirror speed',
        )}
      </div>
    </div>
  </section>`;
}

/** The comparison report page as an HTML string. */
export function buildCompareReportHtml(c: ComparisonLike, generatedAt: Date = new Date()): string {
  const plots: PlotSpec[] = [];
  const name = typeof c.name === 'string' ? c.name : 'unnamed comparison';
  const body = html`${tableSection(c)}${waveformSection(c, plots)}${glossarySection([
    'equal peak voltage',
    'gain over the mirror held still',
    'mirror held still',
    'ripple',
    'detection band',
    'mode hop',
    'critical speed',
  ])}`;
  return renderPage({
    kind: 'compare',
    title: `${name} — dithercav waveform comparison`,
    heading: name,
    subheading: `sine, triangle and two-tone drives at ${c.basis ?? 'an equal basis'} · drive ${fmtSI(c.frequency_Hz, 'Hz')}`,
    body,
    plots,
    footer: `Comparison written by dithercav ${c.tool_version ?? '(version not recorded)'}; this page written by dithercav ${TOOL_VERSION} from compare.json on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/** Read compare.json in `dir` and write its report.html. Returns the path written; InputError for a missing or malformed file. */
export function writeCompareReport(dir: string): string {
  // the results room's validating reader (exit 2 with file and key path on damage)
  const c = readComparison(dir) as unknown as ComparisonLike;
  const out = join(dir, COMPARE_FILES.report);
  writeFileSync(out, buildCompareReportHtml(c));
  return out;
}
