/**
 * The report of one run (report.html in a run folder), built only from the saved result
 * files (RUN_FILES); it never re-simulates. Every value that was not computed shows as
 * "not computed", never as 0.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { RUN_FILES, RunArtifacts, TraceSeries, TraceSet, SpectraSet } from '../results/artifacts';
import type { RunSummary, StaticCurve } from '../results/summary';
import { classBadge, classColour, CLASS_STYLE } from './class-style';
import {
  fmtByKey,
  fmtNum,
  fmtPercent,
  fmtRatio,
  fmtSI,
  get,
  isNum,
  NOT_COMPUTED,
  snapRoundOff,
} from './format';
import { axis, baseLayout, plotDiv, PlotSpec, renderPage, TRACE_COLOURS } from './html';
import { readRunArtifacts } from './read-results';
import { html, HtmlValue, plotText, SafeHtml } from './safe-html';
import { scenarioRows } from './scenario-table';
import { budgetSection, intensityNote } from './budget-section';
import { runHeadline, stderrOf, withStderr } from './headline';
import { glossarySection } from './glossary';
import { TOOL_VERSION } from '../version';

/** The glossary terms a run report uses, in reading order. */
export const RUN_TERMS = [
  'gap',
  "laser's own output",
  'standard error',
  'detection band',
  'ripple',
  'mode hop',
  'free-running',
  'mirror held still',
  'gain over the mirror held still',
  'gain over the still-mirror curve at the same positions',
  'phase-averaged level',
  'incoherent fraction',
  'enhancement',
  'laser output (net)',
  'rest position',
  'critical speed',
  'power balance error',
  'interface mismatch',
  'mode-steps per second',
] as const;

/** Interface mismatch above this is highlighted: the same limit the run warns at (results/limits.ts). */
import { INTERFACE_MISMATCH_LIMIT } from '../results/limits';
export { INTERFACE_MISMATCH_LIMIT };

/** Marks drawn on a time axis at most; beyond this only every n-th period is marked. */
const MAX_PERIOD_MARKS = 60;

type Row = [label: string, value: string | SafeHtml];

/** A cell: text, with "not computed" styled as such. */
function cell(v: string | SafeHtml, cls = ''): SafeHtml {
  if (typeof v === 'string' && v === NOT_COMPUTED) return html`<td class="nc ${cls}">${v}</td>`;
  return html`<td class="${cls}">${v}</td>`;
}

function table(rows: Row[]): SafeHtml {
  return html`<table>
    ${rows.map(
      ([k, v]) =>
        html`<tr>
          <th>${k}</th>
          ${cell(v, 'num')}
        </tr>`,
    )}
  </table>`;
}

function section(id: string, title: string, ...content: HtmlValue[]): SafeHtml {
  return html`<section id="${id}">
    <h2>${title}</h2>
    ${content}
  </section>`;
}

function scenarioAnalysis(s: RunSummary, key: string): unknown {
  return get(s.scenario, 'analysis', key);
}

function headlineBlock(s: RunSummary): SafeHtml {
  const items = runHeadline(s);
  return html`<div class="headline">
    ${items.map(
      (it, k) =>
        html`<div
          class="answer ${it.ok === true ? 'good' : it.ok === false ? 'bad' : ''}"
          data-answer="${it.id}"
        >
          <p class="q"><span class="n">${k + 1}</span> ${it.question}</p>
          <p class="a">${it.answer}</p>
          ${it.detail ? html`<p class="d">${it.detail}</p>` : ''}
        </div>`,
    )}
  </div>`;
}

function verdict(s: RunSummary): SafeHtml {
  const d = s.driven;
  const cls = d?.class ?? (s.status === 'numerical-failure' ? 'numerical-failure' : null);
  const reason = d?.class_reason ?? s.message ?? 'no driven result was computed';
  const meaning = cls && cls in CLASS_STYLE ? CLASS_STYLE[cls as keyof typeof CLASS_STYLE].meaning : '';
  const rippleLimit = scenarioAnalysis(s, 'ripple_limit');
  const maxHops = scenarioAnalysis(s, 'max_hops_per_period');
  const minGain = scenarioAnalysis(s, 'min_gain_over_static');
  const minIncoherent = scenarioAnalysis(s, 'min_incoherent_fraction');
  const bandwidth = scenarioAnalysis(s, 'detection_bandwidth');
  const se = (key: string, v: unknown, f: (x: unknown) => string): string => {
    const e = stderrOf(d, key);
    return isNum(v) && e !== null ? `${f(v)} ± ${f(e)}` : f(v);
  };
  const rows: Row[] = [
    [
      'gain over the mirror held still (mean over the same rest positions)',
      se('gain_over_static', d?.gain_over_static, (x) => fmtRatio(x)),
    ],
    [
      'gain over the still-mirror curve at the same positions (used by the class)',
      se('gain_over_quasi_static', d?.gain_over_quasi_static, (x) => fmtRatio(x)),
    ],
    ['gain over the worst still position', fmtRatio(d?.gain_over_worst_static)],
    [
      'incoherent fraction (gap power over the phase-averaged level)',
      se('incoherent_fraction', d?.incoherent_fraction, (x) => fmtRatio(x)),
    ],
    [
      'enhancement (gap power over the free-running intracavity power)',
      se('enhancement', d?.enhancement, (x) => fmtRatio(x)),
    ],
    [
      `ripple in the detection band (${fmtSI(bandwidth, 'Hz')})`,
      se('ripple_rel', d?.ripple_rel, (x) => fmtPercent(x)),
    ],
    ['ripple at full bandwidth', fmtPercent(d?.ripple_full_band_rel)],
    [
      'mode hops',
      isNum(d?.hops_per_s)
        ? `${fmtNum(d?.hops_per_s)} /s (${fmtNum(d?.hops_per_period)} per drive period)`
        : NOT_COMPUTED,
    ],
  ];
  const thresholds: Row[] = [
    ['ripple limit', fmtPercent(rippleLimit)],
    ['hops allowed per period', fmtNum(maxHops)],
    ['least gain over the mirror held still', fmtRatio(minGain)],
    ['least incoherent fraction', fmtRatio(minIncoherent)],
  ];
  return section(
    'verdict',
    'The answer',
    headlineBlock(s),
    html`<div class="verdict" style="border-left-color:${classColour(cls)}">
      <p class="cls">${classBadge(cls)} ${meaning}</p>
      <p class="why"><b>Why:</b> ${reason}</p>
    </div>`,
    s.status === 'numerical-failure'
      ? html`<ul class="warnlist">
          <li><b>The run failed numerically:</b> ${s.message ?? 'no message'}</li>
        </ul>`
      : '',
    html`<div class="grid2">
      <div class="keep">
        <h3>Key figures</h3>
        ${table(rows)}
      </div>
      <div class="keep">
        <h3>Thresholds used for the class (from the scenario)</h3>
        ${table(thresholds)}
      </div>
    </div>`,
  );
}

function comparison(s: RunSummary): SafeHtml {
  const fr = s.free_running;
  const st = s.static;
  const d = s.driven;
  const range = (mean: unknown, min: unknown, max: unknown): string =>
    isNum(mean) ? `${fmtSI(mean, 'W')} (${fmtSI(min, 'W')} … ${fmtSI(max, 'W')})` : NOT_COMPUTED;
  const spread = d?.external_mean_by_offset_W;
  const rows: [string, string, string, string][] = [
    [
      'gap power, one way: mean (min … max)',
      '— (no gap)',
      range(st?.external_W?.mean, st?.external_W?.min, st?.external_W?.max),
      isNum(d?.external_mean_W)
        ? `${withStderr(d.external_mean_W, stderrOf(d, 'external_mean_W'), 'W')}; ${fmtSI(d.external_min_W, 'W')} … ${fmtSI(d.external_max_W, 'W')}`
        : NOT_COMPUTED,
    ],
    [
      'laser output, net: mean (min … max)',
      fmtSI(fr?.output_W, 'W'),
      range(st?.laser_output_W?.mean, st?.laser_output_W?.min, st?.laser_output_W?.max),
      range(d?.laser_output_mean_W, d?.laser_output_min_W, d?.laser_output_max_W),
    ],
    [
      'laser intracavity power, one way',
      fmtSI(fr?.intracavity_W, 'W'),
      range(st?.intracavity_W?.mean, st?.intracavity_W?.min, st?.intracavity_W?.max),
      fmtSI(d?.laser_intracavity_mean_W, 'W'),
    ],
    [
      'lasing modes',
      Array.isArray(fr?.lasing_modes)
        ? fr.lasing_modes.length === 0
          ? 'none'
          : fr.lasing_modes.join(', ')
        : NOT_COMPUTED,
      '',
      Array.isArray(d?.mode_occupation)
        ? d.mode_occupation
            .filter((m) => m.fraction > 0.01)
            .map((m) => m.index)
            .join(', ')
        : NOT_COMPUTED,
    ],
    [
      'positions / rest positions',
      '',
      isNum(st?.positions)
        ? `${st?.positions} over λ/2${st?.converged === false ? ' (mean not converged)' : ''}`
        : NOT_COMPUTED,
      isNum(d?.offsets) ? `${d?.offsets} over λ/2` : NOT_COMPUTED,
    ],
    ['up/down difference (hysteresis)', '', fmtPercent(st?.hysteresis_rel), ''],
    [
      'spread of the mean over rest positions',
      '',
      '',
      spread && isNum(spread.min) ? `${fmtSI(spread.min, 'W')} … ${fmtSI(spread.max, 'W')}` : NOT_COMPUTED,
    ],
    [
      'standard error of the driven mean gap power (docs/model.md §4.2)',
      '',
      '',
      isNum(d?.external_mean_stderr_W) && isNum(d?.external_mean_W)
        ? `± ${fmtSI(d.external_mean_stderr_W, 'W')} (${fmtPercent(d.external_mean_stderr_W / d.external_mean_W)})${d?.stopped_by === 'budget' ? ', above the target: the step budget stopped the run' : ''}`
        : NOT_COMPUTED,
    ],
    [
      'gap power standard deviation over time (not the error of the mean)',
      '',
      '',
      fmtSI(d?.external_std_W, 'W'),
    ],
  ];
  return section(
    'compare',
    'No return mirror, mirror held still, mirror dithered',
    html`<table class="compare">
      <thead>
        <tr>
          <th></th>
          <th class="num">free-running laser</th>
          <th class="num">mirror held still (mean over λ/2)</th>
          <th class="num">mirror dithered (mean over rest positions)</th>
        </tr>
      </thead>
      <tbody>
        ${rows.map(
          (r) =>
            html`<tr>
              <th>${r[0]}</th>
              ${cell(r[1], 'num')}${cell(r[2], 'num')}${cell(r[3], 'num')}
            </tr>`,
        )}
      </tbody>
    </table>`,
    html`<p class="note">
      Laser output is the net power through the output coupler: light leaving the laser minus light the gap
      returns into it. Its minimum can be below 0: for moments more light comes back than leaves.
    </p>`,
    s.static === null ? html`<p class="note">The still-mirror reference was not computed.</p>` : '',
    s.driven === null ? html`<p class="note">The driven run was not computed.</p>` : '',
  );
}

function hLine(y: number, colour: string, dash: string): Record<string, unknown> {
  return {
    type: 'line',
    xref: 'paper',
    x0: 0,
    x1: 1,
    yref: 'y',
    y0: y,
    y1: y,
    line: { color: colour, width: 1.5, dash },
  };
}

function staticSection(a: RunArtifacts, plots: PlotSpec[]): SafeHtml {
  const c: StaticCurve | null = a.static_curve;
  const d = a.summary.driven;
  const parts: HtmlValue[] = [];
  const data: Record<string, unknown>[] = [];
  if (c && Array.isArray(c.position_m) && c.position_m.length > 0) {
    data.push({
      type: 'scatter',
      mode: 'lines',
      name: 'held still, scanning up',
      x: c.position_m,
      y: c.external_up_W,
      line: { color: TRACE_COLOURS[0], width: 2 },
    });
    data.push({
      type: 'scatter',
      mode: 'lines',
      name: 'held still, scanning down',
      x: c.position_m,
      y: c.external_down_W,
      line: { color: TRACE_COLOURS[1], width: 1.5, dash: 'dot' },
    });
  }
  const offs = d?.offset_positions_m;
  const vals = d?.external_mean_by_offset_W?.values;
  if (Array.isArray(offs) && Array.isArray(vals) && offs.length === vals.length && offs.length > 0) {
    data.push({
      type: 'scatter',
      mode: 'markers',
      name: 'dithered, mean at each rest position',
      x: offs,
      y: vals,
      marker: { color: TRACE_COLOURS[2], size: 9, symbol: 'diamond' },
    });
  }
  if (data.length === 0)
    return section(
      'still',
      'Mirror held still, and the dithered run at each rest position',
      html`<p class="note">Neither the still-mirror curve nor the per-rest-position means were saved.</p>`,
    );
  const shapes: Record<string, unknown>[] = [];
  const sm = a.summary.static?.external_W?.mean;
  if (isNum(sm)) shapes.push(hLine(sm, TRACE_COLOURS[0], 'dash'));
  if (isNum(d?.external_mean_W)) shapes.push(hLine(d.external_mean_W, TRACE_COLOURS[2], 'dash'));
  plots.push({
    id: 'plot-static',
    data,
    layout: baseLayout({
      xaxis: axis('mirror position from rest (m)'),
      yaxis: axis('gap power, one way (W)', { rangemode: 'tozero' }),
      shapes,
    }),
  });
  parts.push(
    plotDiv(
      'plot-static',
      `Dashed lines: still-mirror mean (${fmtSI(sm, 'W')}) and dithered mean over rest positions (${fmtSI(d?.external_mean_W, 'W')}). A gap between the up and down curves is hysteresis.`,
      'Gap power with the mirror held still, and the dithered mean at each rest position',
    ),
  );
  if (c && Array.isArray(c.laser_output_up_W) && c.laser_output_up_W.length === c.position_m.length) {
    plots.push({
      id: 'plot-static-laser',
      data: [
        {
          type: 'scatter',
          mode: 'lines',
          name: 'laser output, up',
          x: c.position_m,
          y: c.laser_output_up_W,
          line: { color: TRACE_COLOURS[4], width: 2 },
        },
        {
          type: 'scatter',
          mode: 'lines',
          name: 'laser output, down',
          x: c.position_m,
          y: c.laser_output_down_W,
          line: { color: TRACE_COLOURS[5], width: 1.5, dash: 'dot' },
        },
      ],
      layout: baseLayout({
        height: 260,
        xaxis: axis('mirror position from rest (m)'),
        yaxis: axis('laser output (W)'),
      }),
    });
    parts.push(
      plotDiv(
        'plot-static-laser',
        'Net laser output while the mirror is scanned slowly up and down over half a wavelength.',
        'Laser output with the mirror held still',
      ),
    );
  }
  if (!c)
    parts.push(html`<p class="note">The still-mirror curve (${RUN_FILES.staticCurve}) was not saved.</p>`);
  return section('still', 'Mirror held still, and the dithered run at each rest position', parts);
}

/** Groups of trace series drawn on one plot each: by unit, powers split into gap, laser output and per-mode. */
export function groupSeries(series: TraceSeries[]): { title: string; unit: string; series: TraceSeries[] }[] {
  const groups = new Map<string, { title: string; unit: string; series: TraceSeries[]; rank: number }>();
  for (const s of series) {
    if (!s || !Array.isArray(s.values)) continue;
    const text = `${s.key} ${s.label}`;
    let kind: string;
    let title: string;
    let rank: number;
    if (s.unit === 'm') [kind, title, rank] = ['pos', 'mirror position', 0];
    else if (s.unit === 'm/s') [kind, title, rank] = ['speed', 'mirror speed', 1];
    else if (s.unit === 'W' && /mode/i.test(text) && !/laser|output/i.test(text))
      [kind, title, rank] = ['modes', 'power in each laser mode', 4];
    else if (s.unit === 'W' && /laser|output/i.test(text)) [kind, title, rank] = ['laser', 'laser output', 3];
    else if (s.unit === 'W') [kind, title, rank] = ['gap', 'power in the gap', 2];
    else [kind, title, rank] = [`other:${s.unit}`, s.label || s.key, 5];
    let g = groups.get(kind);
    if (!g) {
      g = { title, unit: s.unit, series: [], rank };
      groups.set(kind, g);
    }
    g.series.push(s);
  }
  return [...groups.values()]
    .sort((x, y) => x.rank - y.rank)
    .map(({ title, unit, series: ss }) => ({ title, unit, series: ss }));
}

function periodMarks(t: number[], period: number | null): Record<string, unknown>[] {
  if (!isNum(period) || period <= 0 || t.length < 2) return [];
  const t0 = t[0];
  const t1 = t[t.length - 1];
  const n = Math.floor((t1 - t0) / period);
  const every = Math.max(1, Math.ceil(n / MAX_PERIOD_MARKS));
  const out: Record<string, unknown>[] = [];
  for (let k = Math.ceil(t0 / period); k * period <= t1; k += every) {
    out.push({
      type: 'line',
      xref: 'x',
      x0: k * period,
      x1: k * period,
      yref: 'paper',
      y0: 0,
      y1: 1,
      line: { color: '#b9bec8', width: 1, dash: 'dot' },
    });
  }
  return out;
}

/** Drive periods shown in the zoom of a trace. */
export const ZOOM_PERIODS = 3;

/**
 * The envelope of a decimated series over windows of `width` seconds (one drive period):
 * per window its time centre, minimum, maximum and mean of the finite values (null where
 * a window has none, e.g. before a moving average has filled).
 */
export function envelope(
  t: readonly number[],
  v: readonly (number | null)[],
  width: number,
): { t: number[]; min: (number | null)[]; max: (number | null)[]; mean: (number | null)[] } {
  const out = {
    t: [] as number[],
    min: [] as (number | null)[],
    max: [] as (number | null)[],
    mean: [] as (number | null)[],
  };
  if (t.length === 0 || !(width > 0)) return out;
  const t0 = t[0];
  let k = 0;
  while (k < t.length) {
    const w = Math.floor((t[k] - t0) / width);
    let lo = Infinity;
    let hi = -Infinity;
    let sum = 0;
    let n = 0;
    let j = k;
    for (; j < t.length && Math.floor((t[j] - t0) / width) === w; j++) {
      const x = v[j];
      if (x === null || x === undefined || !Number.isFinite(x)) continue;
      lo = Math.min(lo, x);
      hi = Math.max(hi, x);
      sum += x;
      n++;
    }
    out.t.push(t0 + (w + 0.5) * width);
    out.min.push(n > 0 ? lo : null);
    out.max.push(n > 0 ? hi : null);
    out.mean.push(n > 0 ? sum / n : null);
    k = j;
  }
  return out;
}

function hexToRgba(hex: string, alpha: number): string {
  const n = parseInt(hex.slice(1), 16);
  return `rgba(${(n >> 16) & 255},${(n >> 8) & 255},${n & 255},${alpha})`;
}

function tracesSection(tr: TraceSet | null, plots: PlotSpec[]): SafeHtml {
  const title = 'Time record of the dithered run';
  if (!tr || !Array.isArray(tr.t_s) || !Array.isArray(tr.series) || tr.series.length === 0) {
    return section(
      'traces',
      title,
      html`<p class="note">No time traces were saved (${RUN_FILES.traces}).</p>`,
    );
  }
  const t = tr.t_s;
  const period = isNum(tr.drive_period_s) && tr.drive_period_s > 0 ? tr.drive_period_s : null;
  const span = t.length > 1 ? t[t.length - 1] - t[0] : 0;
  const periods = period ? span / period : 0;
  const zoomPeriods = period ? Math.min(ZOOM_PERIODS, Math.max(1, Math.floor(periods))) : 0;
  const zoomEnd = period ? t[0] + zoomPeriods * period : Infinity;
  const zoomIdx = t.map((x, i) => (x <= zoomEnd ? i : -1)).filter((i) => i >= 0);
  const perPeriod = period && periods > 0 ? t.length / periods : null;
  const parts: HtmlValue[] = [
    html`<p class="note">
      First rest position, analysed window of
      ${fmtSI(span, 's')}${period ? ` (${fmtNum(periods, 3)} drive periods of ${fmtSI(period, 's')})` : ''}.
      ${
        period
          ? `Left: the first ${zoomPeriods} drive period${zoomPeriods === 1 ? '' : 's'}, dotted lines at each period. Right: the whole window as an envelope per drive period (shaded from minimum to maximum, line at the mean), so fast swings do not draw as a solid band.`
          : 'The mirror is still: no drive period, the whole window is drawn.'
      }
      The saved traces are decimated keeping each bucket's minimum and maximum (about
      ${perPeriod ? fmtNum(perPeriod, 2) : fmtNum(t.length, 4)} samples
      ${perPeriod ? 'per drive period' : 'in all'}), so short spikes survive but the shape within a period is
      coarse.
    </p>`,
  ];
  const marks = period
    ? periodMarks(
        t.filter((x) => x <= zoomEnd),
        period,
      )
    : [];
  groupSeries(tr.series).forEach((g, i) => {
    const id = `plot-trace-${i}`;
    const multi = g.series.length > 1;
    const ytitle = plotText(`${g.title} (${g.unit})`);
    const band = g.series.find((s) => s.key === 'external_band');
    let bandNote = '';
    if (band) {
      const first = band.values.findIndex((v) => v !== null && Number.isFinite(v as number));
      if (first > 0)
        bandNote = `The detection-band trace starts at ${fmtSI(t[first] - t[0], 's')}: a moving average over 1 / detection bandwidth has no value until its window is full.`;
    }
    plots.push({
      id,
      data: g.series.map((s, j) => ({
        type: 'scatter',
        mode: 'lines',
        name: plotText(s.label || s.key),
        x: period ? zoomIdx.map((k) => t[k]) : t,
        y: period ? zoomIdx.map((k) => s.values[k]) : s.values,
        line: { width: j === 0 ? 1.6 : 1.2, color: TRACE_COLOURS[j % TRACE_COLOURS.length] },
      })),
      layout: baseLayout({
        height: multi ? 280 : 240,
        margin: { l: 70, r: 16, t: multi ? 40 : 12, b: 48 },
        xaxis: axis('time in the analysed window (s)'),
        yaxis: axis(ytitle),
        shapes: marks,
        showlegend: multi,
      }),
    });
    const boxes: HtmlValue[] = [
      html`<div>
        ${plotDiv(
          id,
          period
            ? `${g.title}: the first ${zoomPeriods} drive period${zoomPeriods === 1 ? '' : 's'} as saved.`
            : `${g.title}: the whole analysed window.`,
          period ? `${g.title}, first ${zoomPeriods} drive period${zoomPeriods === 1 ? '' : 's'}` : g.title,
        )}
      </div>`,
    ];
    if (period) {
      const eid = `plot-trace-env-${i}`;
      const data: Record<string, unknown>[] = [];
      g.series.forEach((s, j) => {
        const e = envelope(t, s.values, period);
        const c = TRACE_COLOURS[j % TRACE_COLOURS.length];
        const name = plotText(s.label || s.key);
        data.push(
          {
            type: 'scatter',
            mode: 'lines',
            name: `${name}, max`,
            x: e.t,
            y: e.max,
            line: { width: 0.5, color: c },
            showlegend: false,
            hoverinfo: 'skip',
          },
          {
            type: 'scatter',
            mode: 'lines',
            name: `${name}, min`,
            x: e.t,
            y: e.min,
            line: { width: 0.5, color: c },
            fill: 'tonexty',
            fillcolor: hexToRgba(c, 0.22),
            showlegend: false,
            hoverinfo: 'skip',
          },
          {
            type: 'scatter',
            mode: 'lines',
            name: `${name}, mean per period`,
            x: e.t,
            y: e.mean,
            line: { width: 1.6, color: c },
          },
        );
      });
      plots.push({
        id: eid,
        data,
        layout: baseLayout({
          height: multi ? 280 : 240,
          margin: { l: 70, r: 16, t: multi ? 40 : 12, b: 48 },
          xaxis: axis('time in the analysed window (s)'),
          yaxis: axis(ytitle),
          showlegend: multi,
        }),
      });
      boxes.push(
        html`<div>
          ${plotDiv(
            eid,
            `${g.title}: minimum to maximum (shaded) and mean in each drive period over the whole window.`,
            `${g.title}, whole window`,
          )}
        </div>`,
      );
    }
    parts.push(
      html`<div class="figure-group">
        <div class="grid2">${boxes}</div>
        ${bandNote ? html`<p class="note">${bandNote}</p>` : ''}
      </div>`,
    );
  });
  return section('traces', title, parts);
}

function rinSection(sp: SpectraSet | null, plots: PlotSpec[]): SafeHtml {
  const title = 'Intensity noise of the gap power';
  const rin = sp?.rin;
  if (!rin || !Array.isArray(rin.f_Hz) || rin.f_Hz.length === 0)
    return section('rin', title, html`<p class="note">No intensity-noise spectrum was saved.</p>`);
  // Skip the zero-frequency bin on a log axis.
  const keep = rin.f_Hz.map((f, i) => [f, rin.values[i]] as const).filter(([f]) => f > 0);
  const fMax = keep.length ? keep[keep.length - 1][0] : 0;
  const harmonics = (sp?.drive_harmonics_Hz ?? []).filter((f) => isNum(f) && f > 0 && f <= fMax).slice(0, 20);
  plots.push({
    id: 'plot-rin',
    data: [
      {
        type: 'scatter',
        mode: 'lines',
        name: 'relative intensity noise',
        x: keep.map((k) => k[0]),
        y: keep.map((k) => k[1]),
        line: { color: TRACE_COLOURS[0], width: 1.4 },
      },
    ],
    layout: baseLayout({
      xaxis: axis('frequency (Hz)', { type: 'log' }),
      yaxis: axis('RIN (dB/Hz)'),
      shapes: harmonics.map((f) => ({
        type: 'line',
        xref: 'x',
        x0: f,
        x1: f,
        yref: 'paper',
        y0: 0,
        y1: 1,
        line: { color: TRACE_COLOURS[1], width: 1, dash: 'dot' },
      })),
      showlegend: false,
    }),
  });
  return section(
    'rin',
    title,
    plotDiv(
      'plot-rin',
      `One-sided, Hann window, ${fmtNum(rin.segments)} averaged segments, resolution ${fmtSI(rin.resolution_Hz, 'Hz')}. Dotted lines: drive frequency and its harmonics (up to the 20th)${harmonics.length === 0 ? ' (none inside the plotted range)' : ''}.`,
      'Relative intensity noise (RIN) of the gap power',
    ),
  );
}

function opticalSection(
  sp: SpectraSet | null,
  drive: RunSummary['drive'] | undefined,
  plots: PlotSpec[],
): SafeHtml {
  const title = 'Spectrum of the light returned to the laser';
  const opt = (sp?.optical ?? []).filter((o) => Array.isArray(o.f_Hz) && o.f_Hz.length > 0);
  if (opt.length === 0)
    return section('optical', title, html`<p class="note">No optical spectrum was saved.</p>`);
  const absolute = opt.some((o) => o.f_Hz.some((f) => Math.abs(f) > 1e12));
  // The Doppler sidebands sit within a few peak Doppler shifts of the line; the saved span
  // is often far wider, so the plot opens on the sidebands (double-click shows it all).
  const fd = drive?.peak_doppler_Hz;
  const fDrive = drive?.frequency_Hz;
  const half = isNum(fd) && fd > 0 ? Math.max(3 * fd, isNum(fDrive) ? 10 * fDrive : 0) : null;
  const lo = Math.min(...opt.map((o) => o.f_Hz[0]));
  const hi = Math.max(...opt.map((o) => o.f_Hz[o.f_Hz.length - 1]));
  const zoom = !absolute && half !== null && half < (hi - lo) / 2 ? [-half, half] : undefined;
  const bins = opt.map((o) => (o.f_Hz.length > 1 ? Math.abs(o.f_Hz[1] - o.f_Hz[0]) : NaN)).filter(isNum);
  const res = bins.length ? Math.max(...bins) : null;
  // sidebands at multiples of the drive frequency need at least two bins between them
  const resolved = isNum(res) && isNum(fDrive) && res <= fDrive / 2;
  plots.push({
    id: 'plot-optical',
    data: opt.map((o, i) => ({
      type: 'scatter',
      mode: 'lines',
      name: `mode ${o.mode}`,
      x: o.f_Hz,
      y: o.values,
      line: { width: 1.3, color: TRACE_COLOURS[i % TRACE_COLOURS.length] },
    })),
    layout: baseLayout({
      xaxis: axis(
        absolute ? 'optical frequency (Hz)' : 'frequency offset from the mode (Hz)',
        zoom ? { range: zoom } : {},
      ),
      yaxis: axis('power relative to the peak (dB)'),
    }),
  });
  return section(
    'optical',
    title,
    plotDiv(
      'plot-optical',
      `${resolved ? `The moving mirror shifts the returned light by up to the peak Doppler shift (${fmtSI(fd, 'Hz')}); with a bin width of ${fmtSI(res, 'Hz')} the sidebands, spaced at the drive frequency, are resolved.` : `Bin width ${fmtSI(res, 'Hz')}${isNum(fDrive) ? `, wider than the drive frequency (${fmtSI(fDrive, 'Hz')})` : ''}: the Doppler sidebands, spaced at the drive frequency, are not resolved in this record; the plot shows only how far the returned light spreads (up to the peak Doppler shift, ${fmtSI(fd, 'Hz')}). A longer analysed time narrows the bins.`}${zoom ? ` Shown: ±${fmtSI(half, 'Hz')}; the saved span is ${fmtSI(lo, 'Hz')} to ${fmtSI(hi, 'Hz')}, double-click the plot to see it all.` : ''}`,
      'Returned light around each strong mode',
    ),
  );
}

function modesSection(s: RunSummary, plots: PlotSpec[]): SafeHtml {
  const title = 'Which mode carries the power';
  const d = s.driven;
  const parts: HtmlValue[] = [];
  const occ = Array.isArray(d?.mode_occupation) ? d.mode_occupation : [];
  const hist = Array.isArray(d?.hop_phase_histogram) ? d.hop_phase_histogram : [];
  const inner: HtmlValue[] = [];
  if (occ.length > 0) {
    plots.push({
      id: 'plot-occupation',
      data: [
        {
          type: 'bar',
          name: 'time dominant',
          x: occ.map((m) => m.index),
          y: occ.map((m) => m.fraction),
          marker: { color: TRACE_COLOURS[0] },
        },
      ],
      layout: baseLayout({
        height: 280,
        xaxis: axis('mode index (from the gain peak)', { dtick: 1 }),
        yaxis: axis('fraction of time dominant', { range: [0, 1] }),
        showlegend: false,
      }),
    });
    inner.push(
      html`<div>
        ${plotDiv('plot-occupation', 'Share of the analysed time each mode is the strongest.', 'Mode occupation')}
      </div>`,
    );
  } else inner.push(html`<div><p class="note">Mode occupation: ${NOT_COMPUTED}.</p></div>`);
  const total = hist.reduce((a, b) => a + (isNum(b) ? b : 0), 0);
  if (hist.length > 0 && total === 0)
    inner.push(
      html`<div>
        <h3>Hop phases</h3>
        <p class="note">No mode hop was counted in the analysed window.</p>
      </div>`,
    );
  else if (hist.length > 0) {
    const w = 360 / hist.length;
    plots.push({
      id: 'plot-hop-phase',
      data: [
        {
          type: 'bar',
          name: 'hops',
          x: hist.map((_, i) => (i + 0.5) * w),
          y: hist,
          width: hist.map(() => w * 0.92),
          marker: { color: TRACE_COLOURS[3] },
        },
      ],
      layout: baseLayout({
        height: 280,
        xaxis: axis('drive phase (degrees)', { range: [0, 360], dtick: 90 }),
        yaxis: axis('hops', { rangemode: 'tozero' }),
        showlegend: false,
      }),
    });
    inner.push(
      html`<div>
        ${plotDiv('plot-hop-phase', `Where in the drive period the ${fmtNum(total)} counted hops happen (turning points at 90° and 270° for a sine starting at phase 0).`, 'Hop phases')}
      </div>`,
    );
  } else inner.push(html`<div><p class="note">Hop phase histogram: ${NOT_COMPUTED}.</p></div>`);
  parts.push(html`<div class="grid2">${inner}</div>`);
  return section('modes', title, parts);
}

/** A sentence reconciling the speed rule with the simulated class when they disagree. */
function ruleVersusClass(s: RunSummary): SafeHtml | string {
  const frac = s.drive?.fraction_below_critical;
  const cls = s.driven?.class;
  if (!isNum(frac) || !cls) return '';
  const ruleSaysCoupled = frac > 0.5;
  if (ruleSaysCoupled && cls === 'decoupled')
    return html`<p class="note rule-vs-class">
      <b>Rule and simulation disagree here:</b> the mirror spends ${fmtPercent(frac)} of the time below the
      critical speed, so the rule alone would expect the laser to follow the mirror, yet the simulation finds
      it decoupled. The rule compares speeds only; it leaves out how strongly the returned light couples and
      how fast the laser can follow it, which the simulation includes. Trust the simulated class and read the
      rule as a first guess.
    </p>`;
  if (!ruleSaysCoupled && (cls === 'hopping' || cls === 'no-gain'))
    return html`<p class="note rule-vs-class">
      <b>Rule and simulation disagree here:</b> the mirror spends only ${fmtPercent(frac)} of the time below
      the critical speed, yet the simulation finds the class ${cls}: the rule is a first-order estimate and
      misses what the simulation sees.
    </p>`;
  return '';
}

function driveSection(s: RunSummary): SafeHtml {
  const dr = s.drive;
  const rows: Row[] = [
    ['waveform', dr?.waveform ?? NOT_COMPUTED],
    ['amplitude', fmtSI(dr?.amplitude_m, 'm')],
    ['frequency', fmtSI(dr?.frequency_Hz, 'Hz')],
    ['stroke (peak to peak)', fmtSI(dr?.stroke_m, 'm')],
    ['peak speed', fmtSI(dr?.peak_speed_m_s, 'm/s')],
    ['peak acceleration', fmtSI(dr?.peak_acceleration_m_s2, 'm/s²')],
    ['peak Doppler shift', fmtSI(dr?.peak_doppler_Hz, 'Hz')],
    ['injection-locking half width', fmtSI(dr?.locking_half_width_Hz, 'Hz')],
    ['critical speed (locking rule)', fmtSI(dr?.critical_speed_m_s, 'm/s')],
    ['critical speed (Landau-Zener estimate)', fmtSI(dr?.critical_speed_landau_zener_m_s, 'm/s')],
    ['time spent below the critical speed', fmtPercent(dr?.fraction_below_critical)],
  ];
  return section(
    'drive',
    'The drive and the speed rule',
    table(rows),
    html`<p class="note">
      The speed rule is a first-order estimate (docs/model.md §4.4): feedback is taken as decoupled while the
      Doppler shift 2|v|/λ exceeds the locking half width; a sine passes through v = 0 twice per period and
      spends the fraction (2/π) arcsin(v_c / v_peak) below v_c. The class comes from the simulation, not from
      this rule.
    </p>`,
    ruleVersusClass(s),
  );
}

interface ActuatorRow {
  quantity: string;
  value: number | string | null;
  unit: string;
  limit: number | string | null;
  ok: boolean | null;
  /** false for a row of the sheet that no scenario key limits (its limit cell stays empty) */
  limited?: boolean;
}

/** A limit check of the sheet, read defensively (the file may come from another version). */
interface SheetLimit {
  key: string;
  value: number;
  limit: number;
  unit: string;
  kind: string;
  ok: boolean;
}

function sheetLimits(sheet: unknown): SheetLimit[] {
  const l = get(sheet, 'limits');
  return Array.isArray(l)
    ? l.filter(
        (x): x is SheetLimit =>
          x !== null && typeof x === 'object' && typeof (x as SheetLimit).key === 'string',
      )
    : [];
}

/** "<= 150 V" or ">= 1.5" for a limit check. */
function limitText(c: SheetLimit): string {
  const bound = c.unit === '' ? fmtNum(c.limit) : fmtSI(c.limit, c.unit);
  return `${c.kind === 'min' ? '≥' : '≤'} ${bound}`;
}

/**
 * The rows of an actuator sheet (summary.actuator, the object of actuatorSheet): what the
 * amplifier and the mechanics have to deliver, each limit the scenario sets beside its
 * value. The kinematics (stroke, speed, Doppler shift) are in the drive section already.
 */
function sheetRows(sheet: unknown): ActuatorRow[] {
  const req = get(sheet, 'actuator');
  if (req === null || typeof req !== 'object') return [];
  const limits = sheetLimits(sheet);
  const check = (key: string): Pick<ActuatorRow, 'limit' | 'ok' | 'limited'> => {
    const c = limits.find((l) => l.key === key);
    return c
      ? { limit: limitText(c), ok: c.ok === true, limited: true }
      : { limit: null, ok: null, limited: true };
  };
  const rows: ActuatorRow[] = [];
  const push = (r: ActuatorRow) => rows.push({ limited: false, ...r });
  const num = (v: unknown): number | null => (isNum(v) ? v : null);
  const src = get(req, 'resolved', 'resonance_source');
  push({
    quantity: 'stroke per volt (static)',
    value: num(get(req, 'resolved', 'stroke_per_volt_m_V')),
    unit: 'm/V',
    limit: null,
    ok: null,
  });
  push({
    quantity: `first resonance${typeof src === 'string' && src !== 'none' ? ` (${src})` : ''}`,
    value: num(get(req, 'resolved', 'resonance_Hz')),
    unit: 'Hz',
    limit: null,
    ok: null,
  });
  push({
    quantity: 'quality factor',
    value: num(get(req, 'resolved', 'quality_factor')),
    unit: '',
    limit: null,
    ok: null,
  });
  const comps = get(req, 'components');
  if (Array.isArray(comps)) {
    for (const c of comps) {
      const label = String(get(c, 'label') ?? '');
      const mag = get(c, 'response_magnitude');
      push({
        quantity: `${label}: response |H| at ${fmtSI(get(c, 'frequency_Hz'), 'Hz')}`,
        value: isNum(mag) ? fmtNum(mag) : null,
        unit: '',
        limit: null,
        ok: null,
      });
      if (comps.length > 1)
        push({
          quantity: `${label}: voltage amplitude`,
          value: num(get(c, 'voltage_V')),
          unit: 'V',
          limit: null,
          ok: null,
        });
    }
  }
  const margin = get(req, 'resonance_margin');
  // without a resonance the response is quasi-static and there is no margin to check (the notes say so)
  if (isNum(margin)) {
    push({
      quantity: 'resonance / drive frequency',
      value: fmtNum(margin),
      unit: '',
      ...check('actuator.min_resonance_margin'),
    });
    const above = get(req, 'above_resonance') === true;
    push({
      quantity: 'drive below the resonance',
      value: above ? 'no' : 'yes',
      unit: '',
      limit: 'yes',
      ok: !above,
      limited: true,
    });
  }
  push({
    quantity: 'peak voltage',
    value: num(get(req, 'voltage_peak_V')),
    unit: 'V',
    ...check('actuator.max_voltage'),
  });
  push({
    quantity: 'voltage peak to peak',
    value: num(get(req, 'voltage_peak_to_peak_V')),
    unit: 'V',
    limit: null,
    ok: null,
  });
  push({
    quantity: 'peak reactive current',
    value: num(get(req, 'current_peak_A')),
    unit: 'A',
    ...check('actuator.max_current'),
  });
  push({
    quantity: 'reactive power (½ V I)',
    value: num(get(req, 'reactive_power_var')),
    unit: 'var',
    limit: null,
    ok: null,
  });
  if (isNum(get(req, 'force_N')))
    push({
      quantity: 'peak force on the moving mass',
      value: num(get(req, 'force_N')),
      unit: 'N',
      limit: null,
      ok: null,
    });
  return rows;
}

/**
 * The actuator section: summary.actuator is either the sheet of actuatorSheet (an object,
 * statuses OK / EXCEEDED, its notes below the table) or a plain list of rows
 * { quantity, value, unit, limit, ok } (statuses yes / NO); nothing when absent or null.
 */
function actuatorSection(s: RunSummary): SafeHtml {
  const raw = (s as unknown as { actuator?: unknown }).actuator;
  const isSheet = raw !== null && typeof raw === 'object' && !Array.isArray(raw);
  const rowsRaw: unknown[] = Array.isArray(raw) ? raw : isSheet ? sheetRows(raw) : [];
  if (rowsRaw.length === 0) return html``;
  const [yes, no] = isSheet ? ['OK', 'EXCEEDED'] : ['yes', 'NO'];
  const v = (x: unknown, unit: unknown): string =>
    typeof x === 'number'
      ? fmtSI(x, typeof unit === 'string' ? unit : '')
      : typeof x === 'string'
        ? x
        : NOT_COMPUTED;
  const rows = rowsRaw.filter((r): r is ActuatorRow => r !== null && typeof r === 'object');
  const exceeded = get(raw, 'exceeded');
  const notes = get(raw, 'notes');
  return section(
    'actuator',
    'What the actuator has to deliver',
    html`<table>
      <thead>
        <tr>
          <th>quantity</th>
          <th class="num">needed</th>
          <th class="num">limit</th>
          <th>within limit</th>
        </tr>
      </thead>
      <tbody>
        ${rows.map(
          (r) =>
            html`<tr class="${r.ok === false ? 'flag' : ''}">
              <th>${String(r.quantity ?? '')}</th>
              ${cell(v(r.value, r.unit), 'num')}${r.limited === false ? html`<td class="num"></td>` : cell(r.limit === null || r.limit === undefined ? 'no limit given' : v(r.limit, r.unit), 'num')}
              <td>${r.ok === true ? yes : r.ok === false ? no : '—'}</td>
            </tr>`,
        )}
      </tbody>
    </table>`,
    isSheet && Array.isArray(exceeded)
      ? html`<p class="note">
          ${exceeded.length === 0 ? 'Every limit the scenario sets is met.' : `Limits exceeded: ${exceeded.map(String).join(', ')}.`}
        </p>`
      : '',
    isSheet && Array.isArray(notes) && notes.length > 0
      ? html`<ul class="note">
          ${notes.map((n) => html`<li>${String(n)}</li>`)}
        </ul>`
      : '',
  );
}

function balanceSection(s: RunSummary): SafeHtml {
  const pb = s.power_balance;
  const mismatch = pb?.interface_mismatch_rel;
  const high = isNum(mismatch) && mismatch > INTERFACE_MISMATCH_LIMIT;
  const rows: [string, unknown, boolean][] = [
    ['integration error, worst subsystem', pb?.relative_error, false],
    ['integration error, laser', pb?.laser_relative_error, false],
    ['integration error, external cavity', pb?.external_relative_error, false],
    ['interface mismatch at the output coupler (laser vs gap bookkeeping)', mismatch, high],
  ];
  const warnings = Array.isArray(s.warnings) ? s.warnings : [];
  return section(
    'balance',
    'Bookkeeping: power balance and where the model is stretched',
    pb === null || pb === undefined
      ? html`<p class="note">Power balance: ${NOT_COMPUTED}.</p>`
      : html`<table>
          ${rows.map(
            ([k, val, flag]) =>
              html`<tr class="${flag ? 'flag' : ''}">
                <th>${k}</th>
                ${cell(fmtPercent(val), 'num')}
                <td>
                  ${flag ? html`<b>above ${fmtPercent(INTERFACE_MISMATCH_LIMIT, 2)}: treat the powers with care</b>` : ''}
                </td>
              </tr>`,
          )}
        </table>`,
    warnings.length === 0
      ? html`<p class="note">No model-validity warnings.</p>`
      : html`<h3>Model-validity warnings</h3>
          <ul class="warnlist">
            ${warnings.map((w) => html`<li><code>${String(w?.code ?? '')}</code> ${String(w?.message ?? '')}</li>`)}
          </ul>`,
  );
}

const DERIVED_LABELS: [key: string, label: string][] = [
  ['fsr_laser_Hz', 'free spectral range, laser cavity'],
  ['fsr_external_Hz', 'free spectral range, gap'],
  ['roundtrip_laser_s', 'round trip, laser cavity'],
  ['roundtrip_external_s', 'round trip, gap'],
  ['finesse_external', 'finesse of the gap'],
  ['linewidth_external_Hz', 'resonance width of the gap'],
  ['photon_lifetime_s', 'photon lifetime, laser cavity'],
  ['photon_decay_rate_per_s', 'photon decay rate, laser cavity'],
  ['feedback_efficiency', 'feedback efficiency (mode match back into the laser)'],
  ['roundtrip_efficiency', 'round-trip efficiency of the gap'],
  ['incoherent_enhancement', 'incoherent enhancement (phase-averaged)'],
  ['laser_class', 'laser dynamics class'],
  ['free_running_estimate_W', 'free-running intracavity power, estimate'],
];

const BEAM_LABELS: Record<string, string> = {
  laser_stable: 'laser cavity stable',
  laser_g1g2: 'laser cavity g1·g2',
  external_stable: 'gap stable',
  external_g2g3: 'gap g2·g3',
  radius_at_M1_m: 'beam radius at the rear mirror',
  radius_at_M2_m: 'beam radius at the output coupler',
  radius_at_M3_m: 'beam radius at the return mirror',
  gap_waist_m: 'waist in the gap',
  gap_waist_position_m: 'waist position from the output coupler',
  peak_intensity_per_W_m2: 'peak intensity at the waist per watt circulating',
};

/** A length scale of the gap for round-off snapping: the gap length, else 1 m. */
function gapScale(s: RunSummary): number {
  const L = get(s.scenario, 'external', 'length');
  return isNum(L) && L > 0 ? L : 1;
}

function derivedSection(s: RunSummary): SafeHtml {
  const d = s.derived as unknown as Record<string, unknown> | null;
  if (!d)
    return section(
      'derived',
      'Figures that follow from the setup',
      html`<p class="note">${NOT_COMPUTED}.</p>`,
    );
  const rows: Row[] = DERIVED_LABELS.filter(([k]) => k in d).map(([k, label]) => {
    const src = k === 'feedback_efficiency' || k === 'roundtrip_efficiency' ? d[`${k}_source`] : undefined;
    return [label, fmtByKey(k, d[k]) + (typeof src === 'string' ? ` (from ${src})` : '')];
  });
  // Keys added later are shown too, by their unit suffix.
  const known = new Set([
    ...DERIVED_LABELS.map(([k]) => k),
    'modes',
    'beams',
    'feedback_efficiency_source',
    'roundtrip_efficiency_source',
  ]);
  for (const [k, v] of Object.entries(d))
    if (!known.has(k) && (v === null || typeof v !== 'object'))
      rows.push([k.replace(/_/g, ' '), fmtByKey(k, v)]);
  const modes = Array.isArray(s.derived.modes) ? s.derived.modes : [];
  const shown = modes.slice(0, 40);
  const beams = s.derived.beams as unknown as Record<string, unknown> | undefined;
  const beamRows: Row[] = beams
    ? Object.entries(beams)
        .filter(([k, v]) => k !== 'notes' && (v === null || typeof v !== 'object'))
        .map(([k, v]) => [
          BEAM_LABELS[k] ?? k.replace(/_/g, ' '),
          fmtByKey(k, k.endsWith('_position_m') ? snapRoundOff(v, gapScale(s)) : v),
        ])
    : [];
  const notes = Array.isArray(beams?.notes) ? (beams?.notes as unknown[]).map(String) : [];
  return section(
    'derived',
    'Figures that follow from the setup',
    html`<div class="grid2">
      <div>${table(rows)}</div>
      <div>
        <h3>Beams</h3>
        ${beamRows.length ? table(beamRows) : html`<p class="note">${NOT_COMPUTED}</p>`}${notes.map((n) => html`<p class="note">${n}</p>`)}
      </div>
    </div>`,
    html`<h3>Laser modes considered</h3>`,
    shown.length === 0
      ? html`<p class="note">${NOT_COMPUTED}</p>`
      : html`<table>
            <thead>
              <tr>
                <th class="num">index</th>
                <th class="num">frequency</th>
                <th class="num">detuning from gain peak</th>
                <th class="num">relative gain</th>
              </tr>
            </thead>
            <tbody>
              ${shown.map(
                (m) =>
                  html`<tr>
                    <td class="num">${String(m.index)}</td>
                    ${cell(fmtSI(m.frequency_Hz, 'Hz', 9), 'num')}${cell(fmtSI(m.detuning_Hz, 'Hz'), 'num')}${cell(fmtNum(m.gain_rel), 'num')}
                  </tr>`,
              )}
            </tbody>
          </table>
          ${modes.length > shown.length ? html`<p class="note">${modes.length - shown.length} more modes not listed.</p>` : ''}`,
  );
}

function scenarioSection(s: RunSummary): SafeHtml {
  const rows = scenarioRows(s.scenario);
  return section(
    'scenario',
    'The setup as simulated',
    html`<p class="note">
      Normalised scenario (all values SI, defaults filled in), SHA-256
      <code>${s.scenario_sha256 ?? NOT_COMPUTED}</code>.
    </p>`,
    rows.length === 0
      ? html`<p class="note">The scenario was not saved in the summary.</p>`
      : html`<div class="grid2 scenario-groups">
          ${groupRows(rows).map(
            ([head, rs]) =>
              html`<div class="${head === 'general' ? 'wide' : ''}">
                <h3>${head}</h3>
                <table class="scenario">
                  ${rs.map(
                    (r) =>
                      html`<tr>
                        <th><code>${head === 'general' ? r.path : r.path.slice(head.length + 1)}</code></th>
                        <td>${r.text}</td>
                      </tr>`,
                  )}
                </table>
              </div>`,
          )}
        </div>`,
  );
}

/** Scenario rows grouped by their first key (laser, external, drive ...), keeping order. */
function groupRows(rows: { path: string; text: string }[]): [string, { path: string; text: string }[]][] {
  const out: [string, { path: string; text: string }[]][] = [];
  for (const r of rows) {
    const head = /^[^.[]+/.exec(r.path)?.[0] ?? r.path;
    const g = out.find(([h]) => h === (r.path.includes('.') || r.path.includes('[') ? head : 'general'));
    if (g) g[1].push(r);
    else out.push([r.path.includes('.') || r.path.includes('[') ? head : 'general', [r]]);
  }
  return out.sort((x, y) => (x[0] === 'general' ? -1 : y[0] === 'general' ? 1 : 0));
}

function engineSection(s: RunSummary): SafeHtml {
  const t = s.timing;
  const rows: Row[] = [
    ['engine', s.engine ?? NOT_COMPUTED],
    ['why this engine', s.engine_reason ?? NOT_COMPUTED],
    ['status', s.status ?? NOT_COMPUTED],
    ['random seed', isNum(s.seed) ? String(s.seed) : NOT_COMPUTED],
    ['settling time before analysis', fmtSI(s.driven?.settle_time_s, 's')],
    ['analysed time', fmtSI(s.driven?.analysed_time_s, 's')],
    ['wall-clock time', fmtSI(t?.wall_s, 's')],
    ['time steps of the driven run', isNum(t?.steps) ? String(t?.steps) : NOT_COMPUTED],
    ['time steps per second', fmtNum(t?.engine_steps_per_s, 3)],
    ['mode-steps per second (time steps x laser modes)', fmtNum(t?.mode_steps_per_s, 3)],
    ['tool version', s.tool_version ?? NOT_COMPUTED],
    ['result format version', isNum(s.version) ? String(s.version) : NOT_COMPUTED],
  ];
  return section('engine', 'Engine and run cost', table(rows));
}

/**
 * The report page of one run as an HTML string, from its saved artifacts. Sections:
 * verdict (class and reason), free-running / still / dithered comparison, still-mirror
 * curve with per-rest-position means, time traces, RIN, returned-field spectra, mode
 * occupation and hop phases, drive, actuator (when the summary has an `actuator` table),
 * power balance and warnings, derived figures, scenario, engine and timing.
 */
export function buildRunReportHtml(a: RunArtifacts, generatedAt: Date = new Date()): string {
  const s = a.summary;
  const plots: PlotSpec[] = [];
  const body = html`${intensityNote(s)}${verdict(s)}${comparison(s)}${staticSection(a, plots)}${tracesSection(a.traces, plots)}${rinSection(a.spectra, plots)}${opticalSection(a.spectra, s.drive, plots)}${modesSection(s, plots)}${driveSection(s)}${actuatorSection(s)}${budgetSection(s)}${balanceSection(s)}${derivedSection(s)}${scenarioSection(s)}${engineSection(s)}${glossarySection(RUN_TERMS)}`;
  const name = typeof s.name === 'string' ? s.name : 'unnamed run';
  const drive = s.drive;
  return renderPage({
    kind: 'run',
    title: `${name} — dithercav run`,
    heading: name,
    subheading: `class: ${s.driven?.class ?? (s.status === 'numerical-failure' ? 'numerical-failure' : NOT_COMPUTED)} · drive ${fmtSI(drive?.amplitude_m, 'm')} at ${fmtSI(drive?.frequency_Hz, 'Hz')} · engine ${s.engine ?? NOT_COMPUTED}`,
    body,
    plots,
    footer: `Results written by dithercav ${s.tool_version ?? '(version not recorded)'}; this page written by dithercav ${TOOL_VERSION} from the saved results on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/**
 * Read a run folder (summary.json required; traces.json, spectra.json, static_curve.json
 * optional) and write its report.html. Returns the path written. Throws InputError when
 * the summary is missing or not JSON.
 */
export function writeRunReport(dir: string): string {
  const artifacts = readRunArtifacts(dir);
  const out = join(dir, RUN_FILES.report);
  writeFileSync(out, buildRunReportHtml(artifacts));
  return out;
}
