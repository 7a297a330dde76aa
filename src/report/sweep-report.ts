/**
 * The report of a sweep (report.html in a sweep folder), built only from map.json.
 * Two axes: one heatmap per metric and one class map, frequency across and amplitude
 * up when the axes are the drive's (log axes where the sweep's scale is log), with the
 * analytic critical-speed rule A = v_c / (2 pi f), the measured hopping onset, the
 * decoupling boundary and the actuator's reachable region drawn over each. One axis:
 * line plots. More than two axes: the maps show the slice at the first value of the
 * other axes.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { SWEEP_FILES } from '../results/files';
import type { CurvePoint, MapAxis, SweepMap } from '../results/map';
import { axisStrides } from '../results/grid-index';
import { RUN_CLASSES } from '../results/summary';
import { QUANTITY_KINDS } from '../scenario/units';

import { TOOL_VERSION } from '../version';
import { classBadge, classColour, classLegend } from './class-style';
import {
  fmtByKey,
  fmtNum,
  fmtPercent,
  fmtRatio,
  fmtSI,
  isNum,
  labelOfKey,
  NOT_COMPUTED,
  unitOfKey,
} from './format';
import { axis, baseLayout, plotDiv, PlotSpec, renderPage, TRACE_COLOURS } from './html';
import { readSweepMap } from '../results/read';
import { html, HtmlValue, plotText, SafeHtml } from './safe-html';
import { scenarioQuantityKinds } from './scenario-table';
import { glossarySection } from './glossary';

export const SWEEP_MAP_FILE = 'map.json';

/** The glossary terms a sweep report uses. */
export const SWEEP_TERMS = [
  'gap',
  'mirror held still',
  'gain over the mirror held still',
  'enhancement',
  'phase-averaged level',
  'incoherent fraction',
  'detection band',
  'ripple',
  'mode hop',
  'hop onset',
  'decoupling boundary',
  'critical speed',
  'speed rule',
  'reachable region',
  'recommended operating point',
  'no margin on this grid',
  'standard error',
] as const;

/** How many of the best decoupled points the table lists. */
export const BEST_POINTS = 10;

interface MetricStyle {
  label: string;
  /** column heading in tables */
  short: string;
  format: (v: number) => string;
  /** colour scale, our own: light for poor, dark for good */
  colorscale: [number, string][];
}

const GOOD_HIGH: [number, string][] = [
  [0, '#f7f4ea'],
  [0.35, '#a9d0c3'],
  [0.7, '#3f8f8a'],
  [1, '#0b3d4c'],
];
const GOOD_LOW: [number, string][] = [
  [0, '#0b3d4c'],
  [0.3, '#4d8f8a'],
  [0.65, '#e2c48a'],
  [1, '#a8431e'],
];

const METRIC_STYLE: Record<string, MetricStyle> = {
  enhancement: {
    label: 'enhancement (gap power over the free-running intracavity power)',
    short: 'enhancement',
    format: (v) => fmtRatio(v),
    colorscale: GOOD_HIGH,
  },
  gain_over_static: {
    label: 'gain over the mirror held still',
    short: 'gain over still',
    format: (v) => fmtRatio(v),
    colorscale: GOOD_HIGH,
  },
  ripple_rel: {
    label: 'ripple in the detection band (peak to peak over mean)',
    short: 'in-band ripple',
    format: (v) => fmtPercent(v),
    colorscale: GOOD_LOW,
  },
  hops_per_s: {
    label: 'mode hops per second',
    short: 'hops per s',
    format: (v) => `${fmtNum(v)} /s`,
    colorscale: GOOD_LOW,
  },
  external_mean_W: {
    label: 'gap power, mean',
    short: 'gap power',
    format: (v) => fmtSI(v, 'W'),
    colorscale: GOOD_HIGH,
  },
  incoherent_fraction: {
    label: 'incoherent fraction (gap power over the phase-averaged level)',
    short: 'incoherent fraction',
    format: (v) => fmtRatio(v),
    colorscale: GOOD_HIGH,
  },
  ripple_full_band_rel: {
    label: 'ripple at full bandwidth (peak to peak over mean)',
    short: 'full-band ripple',
    format: (v) => fmtPercent(v),
    colorscale: GOOD_LOW,
  },
  hops_per_period: {
    label: 'mode hops per drive period',
    short: 'hops per period',
    format: (v) => fmtNum(v),
    colorscale: GOOD_LOW,
  },
  laser_output_mean_W: {
    label: 'laser output (net), mean',
    short: 'laser output',
    format: (v) => fmtSI(v, 'W'),
    colorscale: GOOD_HIGH,
  },
  critical_speed_m_s: {
    label: 'critical speed of the speed rule',
    short: 'critical speed',
    format: (v) => fmtSI(v, 'm/s'),
    colorscale: GOOD_HIGH,
  },
  peak_speed_m_s: {
    label: 'peak mirror speed',
    short: 'peak speed',
    format: (v) => fmtSI(v, 'm/s'),
    colorscale: GOOD_HIGH,
  },
};
const METRIC_ORDER = ['external_mean_W', 'enhancement', 'gain_over_static', 'ripple_rel', 'hops_per_s'];

/**
 * The colour bar of a metric map: a title saying what the colour is, with its unit, and
 * ticks in that unit (SI-prefixed watts "120mW", percent for relative values, "x" for ratios).
 */
export function colourBar(name: string): Record<string, unknown> {
  const base = { thickness: 14, len: 0.85, title: { side: 'right' } as Record<string, unknown> };
  const titled = (text: string, extra: Record<string, unknown>) => ({
    ...base,
    ...extra,
    title: { ...base.title, text },
  });
  if (name.endsWith('_rel')) return titled(`${metricStyle(name).short} (%)`, { tickformat: '~%' });
  if (name === 'hops_per_s') return titled('hops per second (/s)', { tickformat: '~s' });
  if (name === 'hops_per_period') return titled('hops per period', {});
  const unit = unitOfKey(name);
  if (unit === '') return titled(`${metricStyle(name).short} (x)`, { ticksuffix: 'x' });
  return titled(`${metricStyle(name).short} (${unit})`, { tickformat: '~s', ticksuffix: unit });
}

function metricStyle(name: string): MetricStyle {
  return (
    METRIC_STYLE[name] ?? {
      label: labelOfKey(name),
      short: labelOfKey(name),
      format: (v) => fmtByKey(name, v),
      colorscale: GOOD_HIGH,
    }
  );
}

/** SI unit of a sweep axis key, from the scenario schema ("" when dimensionless or unknown). */
export function axisUnit(key: string): string {
  const kind = scenarioQuantityKinds().get(key);
  return kind ? QUANTITY_KINDS[kind] : '';
}

function fmtAxisValue(key: string, v: unknown): string {
  const unit = axisUnit(key);
  return unit === '' ? fmtNum(v) : fmtSI(v, unit);
}

/** Words for the keys most often swept; others are their key path in words. */
const KEY_WORDS: Record<string, string> = {
  'drive.amplitude': 'drive amplitude',
  'drive.frequency': 'drive frequency',
  'drive.second_amplitude': 'second tone amplitude',
  'drive.second_frequency': 'second tone frequency',
  'drive.offset': 'mirror rest offset',
  'external.length': 'gap length',
  'laser.gain.pump_ratio': 'pump ratio',
  'analysis.detection_bandwidth': 'detection bandwidth',
};

/** A key path in words: "drive.amplitude" -> "drive amplitude", "laser.gain.pump_ratio" -> "pump ratio". */
export function keyWords(key: string): string {
  return KEY_WORDS[key] ?? key.replace(/[._]/g, ' ');
}

/** "drive amplitude (m)": the key in words with its SI unit. */
function axisTitle(a: MapAxis): string {
  const unit = axisUnit(a.key);
  return unit === '' ? keyWords(a.key) : `${keyWords(a.key)} (${unit})`;
}

/**
 * Tick positions and SI-prefixed labels with the unit ("100 nm", "1 µm") for a log axis
 * over [lo, hi]: 1-2-5 steps while that gives at most 9 ticks, else decades only, so the
 * minor labels of a log axis never crowd.
 */
export function logTicks(lo: number, hi: number, unit: string): { tickvals: number[]; ticktext: string[] } {
  const vals = (mults: number[]) => {
    const out: number[] = [];
    for (let e = Math.floor(Math.log10(lo)) - 1; e <= Math.ceil(Math.log10(hi)) + 1; e++)
      for (const m of mults) {
        const v = m * 10 ** e;
        if (v >= lo * (1 - 1e-9) && v <= hi * (1 + 1e-9)) out.push(Number(v.toPrecision(12)));
      }
    return out;
  };
  let tickvals = vals([1, 2, 5]);
  if (tickvals.length > 9) tickvals = vals([1]);
  if (tickvals.length < 2) tickvals = vals([1, 2, 5]);
  return { tickvals, ticktext: tickvals.map((v) => (unit === '' ? fmtNum(v, 3) : fmtSI(v, unit, 3))) };
}

/** Which axis goes across (x) and which up (y) on the maps; null for a one-axis sweep. */
export function mapAxes(m: SweepMap): { x: number; y: number } | null {
  if (m.axes.length < 2) return null;
  const fi = m.frequency_key ? m.axes.findIndex((a) => a.key === m.frequency_key) : -1;
  const ai = m.amplitude_key ? m.axes.findIndex((a) => a.key === m.amplitude_key) : -1;
  if (fi >= 0 && ai >= 0 && fi !== ai) return { x: fi, y: ai };
  return { x: 1, y: 0 };
}

/**
 * The 2-D grid z[iy][ix] of a per-point array for the map axes (other axes at their
 * first value), as plotly's heatmap wants it (rows along y). Missing values are null.
 */
export function grid<T>(m: SweepMap, values: (T | null)[], xy: { x: number; y: number }): (T | null)[][] {
  const st = axisStrides(m.axes);
  const ny = m.axes[xy.y].values.length;
  const nx = m.axes[xy.x].values.length;
  const z: (T | null)[][] = [];
  for (let iy = 0; iy < ny; iy++) {
    const row: (T | null)[] = [];
    for (let ix = 0; ix < nx; ix++) {
      const v = values[iy * st[xy.y] + ix * st[xy.x]];
      row.push(v === undefined ? null : v);
    }
    z.push(row);
  }
  return z;
}

/** A plotly heatmap of a per-point array over the map axes: cell edges on both axes, gaps left empty. */
export function heatmapOf<T>(m: SweepMap, values: (T | null)[], xy: { x: number; y: number }) {
  return {
    type: 'heatmap',
    x: cellEdges(m.axes[xy.x]),
    y: cellEdges(m.axes[xy.y]),
    z: grid(m, values, xy),
    hoverongaps: false,
  };
}

/** Axis range covering the grid's cells (cellEdges), in plotly's units (log10 on a log axis). */
function gridRange(a: MapAxis): [number, number] | undefined {
  if (a.values.length === 0 || !a.values.every(isNum)) return undefined;
  const e = cellEdges(a);
  const log = a.scale === 'log' && a.values.every((v) => v > 0);
  return log ? [Math.log10(e[0]), Math.log10(e[e.length - 1])] : [e[0], e[e.length - 1]];
}

/**
 * Cell edges (n + 1 values) around the n axis values: midpoints in log space on a log
 * axis (geometric means), linear midpoints otherwise, outer cells mirrored. Plotly places
 * bricks at linear midpoints when given centres, which on a log axis shifts every cell.
 */
export function cellEdges(a: MapAxis): number[] {
  const log = a.scale === 'log' && a.values.every((v) => v > 0);
  const c = log ? a.values.map(Math.log10) : [...a.values];
  if (c.length === 1) {
    const w = log ? 0.5 : Math.abs(c[0]) * 0.1 || 0.5;
    const e = [c[0] - w, c[0] + w];
    return log ? e.map((x) => 10 ** x) : e;
  }
  const e: number[] = [c[0] - (c[1] - c[0]) / 2];
  for (let i = 0; i + 1 < c.length; i++) e.push((c[i] + c[i + 1]) / 2);
  e.push(c[c.length - 1] + (c[c.length - 1] - c[c.length - 2]) / 2);
  return log ? e.map((x) => 10 ** x) : e;
}

/**
 * Two coordinates per cell, just inside its edges (1e-6 of the cell's width, in log
 * space on a log axis), and the cell index of each: a contour over these has its
 * crossings on the cell edges.
 */
export function edgePairs(a: MapAxis): { coords: number[]; cell: number[] } {
  const log = a.scale === 'log' && a.values.every((v) => v > 0);
  const e = cellEdges(a).map((v) => (log ? Math.log10(v) : v));
  const coords: number[] = [];
  const cell: number[] = [];
  for (let i = 0; i + 1 < e.length; i++) {
    const d = 1e-6 * (e[i + 1] - e[i]);
    for (const c of [e[i] + d, e[i + 1] - d]) {
      coords.push(log ? 10 ** c : c);
      cell.push(i);
    }
  }
  return { coords, cell };
}

/** Colours of the map overlays and the words the caption uses for them (kept together). */
export const OVERLAY = {
  speedRule: { colour: '#111111', words: 'black dashed line' },
  onset: { colour: '#2de0ff', words: 'cyan line' },
  boundary: { colour: '#ffffff', words: 'white line' },
  reach: { colour: '#1f5fbf', fill: 'rgba(31,95,191,0.22)', words: 'blue shading inside a blue outline' },
  star: { colour: '#ffd23f', words: 'yellow star' },
} as const;

/**
 * A measured boundary curve split where it is only the grid's edge: a point whose
 * amplitude is the grid's smallest (the property is there already at the lowest
 * amplitude, so the true boundary lies at or below the grid) goes to `below`; a
 * frequency with no amplitude (the property never appears up to the largest) goes to
 * `beyond`; the rest, measured between two grid amplitudes, to `line`.
 */
export function splitCurve(
  c: CurvePoint[],
  amplitudes: readonly number[],
): { line: (number | null)[]; below: number[]; beyond: number[]; f: number[] } {
  const lo = Math.min(...amplitudes);
  const f: number[] = [];
  const line: (number | null)[] = [];
  const below: number[] = [];
  const beyond: number[] = [];
  for (const p of c) {
    if (!isNum(p.frequency_Hz)) continue;
    f.push(p.frequency_Hz);
    if (!isNum(p.amplitude_m)) {
      line.push(null);
      beyond.push(p.frequency_Hz);
    } else if (p.amplitude_m <= lo * (1 + 1e-9)) {
      line.push(null);
      below.push(p.frequency_Hz);
    } else line.push(p.amplitude_m);
  }
  return { line, below, beyond, f };
}

function measuredCurve(
  c: CurvePoint[] | null,
  name: string,
  colour: string,
  width: number,
  ampAxis: MapAxis,
  group: string,
): Record<string, unknown>[] {
  if (!Array.isArray(c) || c.length === 0) return [];
  const sp = splitCurve(c, ampAxis.values);
  const e = cellEdges(ampAxis);
  const out: Record<string, unknown>[] = [];
  if (sp.line.some((v) => v !== null))
    out.push({
      type: 'scatter',
      mode: 'lines+markers',
      name: `${name} (measured)`,
      legendgroup: group,
      x: sp.f,
      y: sp.line,
      connectgaps: false,
      hoverinfo: 'skip',
      line: { color: colour, width },
      marker: { color: colour, size: 5 },
    });
  const edgeMarks = (fs: number[], y: number, symbol: string, label: string) => {
    if (fs.length === 0) return;
    out.push({
      type: 'scatter',
      mode: 'markers',
      name: `${name}: ${label}`,
      legendgroup: group,
      x: fs,
      y: fs.map(() => y),
      hoverinfo: 'skip',
      cliponaxis: false,
      marker: { symbol, size: 9, color: colour, line: { color: '#111111', width: 1 } },
    });
  };
  // inside the outermost cells, half way to the grid's edge (geometric on a log axis)
  const v = ampAxis.values;
  const log = ampAxis.scale === 'log' && v.every((x) => x > 0);
  const mid = (a: number, b: number) => (log ? Math.sqrt(a * b) : (a + b) / 2);
  const lowest = Math.min(...v);
  const highest = Math.max(...v);
  edgeMarks(sp.below, mid(lowest, Math.min(...e)), 'triangle-down', 'below the grid');
  edgeMarks(sp.beyond, mid(highest, Math.max(...e)), 'triangle-up', 'beyond the grid');
  return out;
}

/** Figures of the recommended point for its hover label and table. */
function recommendedFigures(m: SweepMap): string[] {
  const r = m.recommended;
  if (!r) return [];
  const i = r.index;
  const metric = (k: string) => m.metrics?.[k]?.[i];
  const lines = [
    `recommended operating point${r.margin === false ? ' (no margin on this grid)' : ''}`,
    `amplitude ${fmtSI(r.amplitude_m, 'm')}, frequency ${fmtSI(r.frequency_Hz, 'Hz')}`,
    `stroke ${fmtSI(r.stroke_m, 'm')} peak to peak`,
  ];
  if (isNum(r.voltage_V))
    lines.push(
      `peak drive ${fmtSI(r.voltage_V, 'V')}${isNum(r.current_A) ? `, ${fmtSI(r.current_A, 'A')}` : ''}`,
    );
  if (isNum(metric('external_mean_W')))
    lines.push(
      `gap power ${fmtSI(metric('external_mean_W'), 'W')}${isNum(stderrAt(m, 'external_mean_W', i)) ? ` ± ${fmtSI(stderrAt(m, 'external_mean_W', i), 'W', 2)}` : ''}`,
    );
  if (isNum(metric('ripple_rel'))) lines.push(`in-band ripple ${fmtPercent(metric('ripple_rel'))}`);
  if (isNum(metric('gain_over_static')))
    lines.push(`gain over the mirror held still ${fmtRatio(metric('gain_over_static'))}`);
  lines.push(`class ${m.classes[i] ?? NOT_COMPUTED}`);
  return lines;
}

/** A metric's standard error at point i, when the map carries `<metric>` with _stderr before its unit. */
export function stderrAt(m: SweepMap, metric: string, i: number): number | null {
  const mm = /^(.*?)(_W|_m|_s|_Hz|_per_s|_m_s)$/.exec(metric);
  const key = mm ? `${mm[1]}_stderr${mm[2]}` : `${metric}_stderr`;
  const v = m.metrics?.[key]?.[i];
  return isNum(v) ? v : null;
}

function overlays(m: SweepMap, xy: { x: number; y: number }, drive: boolean): Record<string, unknown>[] {
  const out: Record<string, unknown>[] = [];
  const inferred = inferredTrace(m, xy);
  if (inferred) out.push(inferred);
  if (
    Array.isArray(m.reachable) &&
    m.reachable.length === m.total_points &&
    m.reachable.some(Boolean) &&
    !m.reachable.every(Boolean)
  ) {
    // Each cell given twice, just inside its two edges, so the 0.5 contour falls on the
    // cell edges and the shading covers whole cells out to the grid's border.
    const ex = edgePairs(m.axes[xy.x]);
    const ey = edgePairs(m.axes[xy.y]);
    const z = grid(
      m,
      m.reachable.map((r) => (r ? 1 : 0)),
      xy,
    );
    out.push({
      type: 'contour',
      name: 'reachable by the actuator (shaded)',
      x: ex.coords,
      y: ey.coords,
      z: ey.cell.map((iy) => ex.cell.map((ix) => z[iy][ix])),
      showscale: false,
      autocontour: false,
      contours: { start: 0.5, end: 0.5, size: 1, coloring: 'fill' },
      colorscale: [
        [0, 'rgba(0,0,0,0)'],
        [1, OVERLAY.reach.fill],
      ],
      line: { color: OVERLAY.reach.colour, width: 2 },
      hoverinfo: 'skip',
      showlegend: true,
    });
  }
  if (drive) {
    const ampAxis = m.axes[xy.y];
    const c1 =
      Array.isArray(m.critical_curve) && m.critical_curve.some((p) => isNum(p.amplitude_m))
        ? {
            type: 'scatter',
            mode: 'lines',
            name: 'speed rule A = v_c/(2πf) (first-order estimate)',
            x: m.critical_curve.map((p) => p.frequency_Hz),
            y: m.critical_curve.map((p) => (isNum(p.amplitude_m) ? p.amplitude_m : null)),
            connectgaps: false,
            hoverinfo: 'skip',
            line: { color: OVERLAY.speedRule.colour, width: 2, dash: 'dash' },
          }
        : null;
    if (c1) out.push(c1);
    out.push(...measuredCurve(m.onset_curve, 'hop onset', OVERLAY.onset.colour, 3, ampAxis, 'onset'));
    out.push(
      ...measuredCurve(
        m.decoupling_boundary,
        'decoupling boundary',
        OVERLAY.boundary.colour,
        3,
        ampAxis,
        'boundary',
      ),
    );
  }
  const r = m.recommended;
  let at: [number, number] | null = null;
  if (r && isNum(r.amplitude_m) && isNum(r.frequency_Hz) && drive) at = [r.frequency_Hz, r.amplitude_m];
  else if (r && !drive && r.axes) {
    const xk = m.axes[xy.x].key;
    const yk = m.axes[xy.y].key;
    if (isNum(r.axes[xk]) && isNum(r.axes[yk])) at = [r.axes[xk], r.axes[yk]];
  }
  if (r && at) {
    out.push({
      type: 'scatter',
      mode: 'markers',
      name: r.margin === false ? 'recommended point (no margin on this grid)' : 'recommended operating point',
      x: [at[0]],
      y: [at[1]],
      marker: {
        symbol: 'star',
        size: 17,
        color: OVERLAY.star.colour,
        line: { color: '#111111', width: 1.5 },
      },
      text: [recommendedFigures(m).map(plotText).join('<br>')],
      hovertemplate: '%{text}<extra></extra>',
    });
  }
  return out;
}

/**
 * A refined map's inferred cells (not run: class and metrics from the computed corners of a
 * uniform cell) hatched with a diagonal stroke, so they are never read as computed.
 */
function inferredTrace(m: SweepMap, xy: { x: number; y: number }): Record<string, unknown> | null {
  if (!Array.isArray(m.point_source) || !m.point_source.includes('inferred')) return null;
  const st = axisStrides(m.axes);
  const x: number[] = [];
  const y: number[] = [];
  m.axes[xy.y].values.forEach((yv, iy) =>
    m.axes[xy.x].values.forEach((xv, ix) => {
      const i = iy * st[xy.y] + ix * st[xy.x];
      if (m.point_source![i] === 'inferred') {
        x.push(xv);
        y.push(yv);
      }
    }),
  );
  return {
    type: 'scatter',
    mode: 'markers',
    name: 'inferred, not run (hatched)',
    x,
    y,
    marker: { symbol: 'line-ne', size: 9, line: { color: 'rgba(17,17,17,0.55)', width: 1.2 } },
    hoverinfo: 'skip',
  };
}

function hoverText(m: SweepMap, xy: { x: number; y: number }): string[][] {
  const ax = m.axes[xy.x];
  const ay = m.axes[xy.y];
  const st = axisStrides(m.axes);
  return ay.values.map((yv, iy) =>
    ax.values.map((xv, ix) => {
      const i = iy * st[xy.y] + ix * st[xy.x];
      const lines = [
        `${plotText(ay.key)} = ${fmtAxisValue(ay.key, yv)}`,
        `${plotText(ax.key)} = ${fmtAxisValue(ax.key, xv)}`,
      ];
      for (const name of orderedMetrics(m)) {
        const v = m.metrics[name]?.[i];
        const se = stderrAt(m, name, i);
        lines.push(
          `${plotText(metricStyle(name).label)}: ${isNum(v) ? metricStyle(name).format(v) : NOT_COMPUTED}${isNum(v) && se !== null ? ` ± ${metricStyle(name).format(se)}` : ''}`,
        );
      }
      lines.push(`class: ${plotText(m.classes[i] ?? NOT_COMPUTED)}`);
      if (m.point_source?.[i] === 'inferred')
        lines.push('inferred, not run (from the computed corners of its cell)');
      if (Array.isArray(m.reachable))
        lines.push(m.reachable[i] ? 'actuator can reach it' : "out of the actuator's reach");
      return lines.join('<br>');
    }),
  );
}

function reachNote(m: SweepMap): string {
  if (!Array.isArray(m.reachable)) return 'No actuator was described, so no reachable region is drawn. ';
  if (m.reachable.every(Boolean)) return 'The actuator can reach every point of the map (no shading drawn). ';
  if (!m.reachable.some(Boolean)) return 'The actuator can reach no point of the map. ';
  return `${OVERLAY.reach.words[0].toUpperCase()}${OVERLAY.reach.words.slice(1)}: the drives the actuator can deliver within its ratings (reachable region). `;
}

/** The metrics the brief puts first, in this order, when present. */
function primaryMetrics(m: SweepMap): string[] {
  return METRIC_ORDER.filter((n) => n in (m.metrics ?? {}));
}

function orderedMetrics(m: SweepMap): string[] {
  // standard errors go with their metric (hover, tables), not on maps of their own
  const names = Object.keys(m.metrics ?? {}).filter((n) => !n.includes('_stderr'));
  return [
    ...METRIC_ORDER.filter((n) => names.includes(n)),
    ...names.filter((n) => !METRIC_ORDER.includes(n)).sort(),
  ];
}

/** The axis settings of one map axis: words and unit in the title, SI-prefixed ticks. */
function mapAxis(a: MapAxis): Record<string, unknown> {
  const log = a.scale === 'log' && a.values.every((v) => v > 0);
  const unit = axisUnit(a.key);
  const extra: Record<string, unknown> = {
    type: log ? 'log' : 'linear',
    range: gridRange(a),
    showgrid: false,
  };
  if (log) {
    const e = cellEdges(a);
    Object.assign(extra, { tickmode: 'array', ...logTicks(e[0], e[e.length - 1], unit) });
  } else if (unit !== '') Object.assign(extra, { tickformat: '~s', ticksuffix: unit });
  return axis(plotText(axisTitle(a)), extra);
}

export function mapLayout(m: SweepMap, xy: { x: number; y: number }): Record<string, unknown> {
  return baseLayout({
    height: 560,
    xaxis: mapAxis(m.axes[xy.x]),
    yaxis: mapAxis(m.axes[xy.y]),
    legend: { orientation: 'h', x: 0, y: -0.2, yanchor: 'top', bgcolor: '#eef0f3' },
    // room above the plot area for the plot tool bar, so it covers no cell
    margin: { l: 90, r: 20, t: 40, b: 150 },
  });
}

/** Discrete colour scale for class numbers 0..n-1 (zmin -0.5, zmax n-0.5). */
export function classColorscale(): [number, string][] {
  const n = RUN_CLASSES.length;
  const out: [number, string][] = [];
  RUN_CLASSES.forEach((c, k) => {
    out.push([k / n, classColour(c)]);
    out.push([(k + 1) / n, classColour(c)]);
  });
  return out;
}

function twoAxisMaps(m: SweepMap, plots: PlotSpec[]): SafeHtml {
  const xy = mapAxes(m)!;
  const drive =
    m.amplitude_key !== null &&
    m.frequency_key !== null &&
    m.axes[xy.x].key === m.frequency_key &&
    m.axes[xy.y].key === m.amplitude_key;
  const text = hoverText(m, xy);
  const over = overlays(m, xy, drive);
  const parts: HtmlValue[] = [];
  const others = m.axes.filter((_, k) => k !== xy.x && k !== xy.y);
  if (others.length > 0) {
    parts.push(
      html`<p class="note">
        The maps show the slice at
        ${others.map((a, k) => html`${k > 0 ? ', ' : ''}<code>${a.key}</code> = ${fmtAxisValue(a.key, a.values[0])}`)}.
      </p>`,
    );
  }
  parts.push(
    html`<p class="note">
      Move the pointer over a cell (or the star) for its values.
      ${
        drive
          ? `${OVERLAY.speedRule.words[0].toUpperCase()}${OVERLAY.speedRule.words.slice(1)}: the speed rule A = v_c/(2πf), a first-order estimate. ${OVERLAY.onset.words[0].toUpperCase()}${OVERLAY.onset.words.slice(1)}: where hops start (measured between two grid amplitudes); ${OVERLAY.boundary.words}: the decoupling boundary (measured). Where a measured boundary lies at or below the smallest amplitude of the grid it is not drawn as a line but marked ▼ on the lower edge ("below the grid"); where it does not appear up to the largest amplitude, ▲ on the upper edge ("beyond the grid"). `
          : ''
      }${reachNote(m)}${m.recommended ? `${OVERLAY.star.words[0].toUpperCase()}${OVERLAY.star.words.slice(1)}: the recommended operating point${m.recommended.margin === false ? ' (no margin on this grid)' : ''}. ` : ''}${
        (m.inferred_points ?? 0) > 0
          ? 'Hatched cells (diagonal stroke): inferred, not run: inside a cell of the refined grid whose computed corners agree; curves and the operating point use computed points only. '
          : ''
      }Empty
      cells: not finished or failed.
    </p>`,
  );
  const classIdx = m.classes.map((c) => (c === null ? null : RUN_CLASSES.indexOf(c)));
  plots.push({
    id: 'map-class',
    data: [
      {
        ...heatmapOf(m, classIdx, xy),
        text,
        hovertemplate: '%{text}<extra></extra>',
        colorscale: classColorscale(),
        zmin: -0.5,
        zmax: RUN_CLASSES.length - 0.5,
        showscale: false,
      },
      ...over,
    ],
    layout: mapLayout(m, xy),
  });
  parts.push(
    html`<div class="map-box">
      ${plotDiv('map-class', 'Class of each point; the lines and shading are explained above the map.', 'Class of each point')}${classLegend()}
    </div>`,
  );
  const primary = primaryMetrics(m);
  const extra: HtmlValue[] = [];
  orderedMetrics(m).forEach((name, i) => {
    const st = metricStyle(name);
    const id = `map-metric-${i}`;
    const isPrimary = primary.includes(name);
    const layout = mapLayout(m, xy);
    if (!isPrimary) Object.assign(layout, { height: 360, showlegend: false });
    plots.push({
      id,
      data: [
        {
          ...heatmapOf(m, m.metrics[name], xy),
          text,
          hovertemplate: '%{text}<extra></extra>',
          colorscale: st.colorscale,
          showscale: true,
          colorbar: colourBar(name),
        },
        ...over,
      ],
      layout,
    });
    if (isPrimary)
      parts.push(plotDiv(id, `Colour: ${st.label}. Lines and shading as on the class map.`, st.label));
    else
      extra.push(
        html`<div>
          ${plotDiv(id, `Colour: ${st.label}.`, `${st.label}${unitOfKey(name) && unitOfKey(name) !== '%' ? ` (${unitOfKey(name)})` : ''}`)}
        </div>`,
      );
  });
  if (extra.length > 0)
    parts.push(
      html`<h3>Further metrics saved in the map</h3>
        <p class="note">Same overlays as above, legend omitted.</p>
        <div class="grid-pairs">${extra}</div>`,
    );
  return html`<section id="maps">
    <h2>Maps over the sweep</h2>
    ${parts}
  </section>`;
}

function oneAxisPlots(m: SweepMap, plots: PlotSpec[]): SafeHtml {
  const a = m.axes[0];
  const parts: HtmlValue[] = [];
  const xaxis = axis(plotText(axisTitle(a)), { type: a.scale === 'log' ? 'log' : 'linear' });
  orderedMetrics(m).forEach((name, i) => {
    const st = metricStyle(name);
    const id = `line-metric-${i}`;
    const vals = m.metrics[name] ?? [];
    plots.push({
      id,
      data: [
        {
          type: 'scatter',
          mode: 'lines+markers',
          name: plotText(st.label),
          x: a.values,
          y: a.values.map((_, k) => (isNum(vals[k]) ? vals[k] : null)),
          line: { color: TRACE_COLOURS[i % TRACE_COLOURS.length], width: 2 },
          marker: { size: 6 },
          text: a.values.map((_, k) => (isNum(vals[k]) ? st.format(vals[k] as number) : NOT_COMPUTED)),
          hovertemplate: `${plotText(a.key)} = %{x}<br>%{text}<extra></extra>`,
        },
      ],
      layout: baseLayout({
        height: 260,
        margin: { l: 70, r: 24, t: 12, b: 52 },
        xaxis,
        yaxis: axis(plotText(st.short)),
        showlegend: false,
      }),
    });
    parts.push(plotDiv(id, `${st.label} along ${keyWords(a.key)}.`, st.label));
  });
  const classes = a.values.map((_, k) => m.classes[k] ?? null);
  plots.push({
    id: 'line-class',
    data: [
      {
        type: 'scatter',
        mode: 'markers',
        name: 'class',
        x: a.values,
        y: classes.map((c) => c ?? NOT_COMPUTED),
        marker: { size: 12, symbol: 'square', color: classes.map((c) => classColour(c)) },
        hovertemplate: `${plotText(a.key)} = %{x}<br>%{y}<extra></extra>`,
      },
    ],
    layout: baseLayout({
      height: 240,
      xaxis,
      yaxis: axis('', {
        type: 'category',
        categoryorder: 'array',
        categoryarray: [...RUN_CLASSES, NOT_COMPUTED],
      }),
      showlegend: false,
      margin: { l: 130, r: 20, t: 20, b: 52 },
    }),
  });
  parts.push(
    html`<div class="map-box">
      ${plotDiv('line-class', `Class of each point along ${keyWords(a.key)}.`, 'Class along the axis')}${classLegend()}
    </div>`,
  );
  return html`<section id="lines">
    <h2>Along the swept key</h2>
    ${parts}
  </section>`;
}

/**
 * Indices of the computed (not inferred) decoupled points with the highest gain over the mirror held still, best
 * first (at most `n`); with a reachability mask, only the points the actuator can reach.
 */
export function bestPoints(
  m: SweepMap,
  n = BEST_POINTS,
  reachableOnly = Array.isArray(m.reachable),
): number[] {
  const g = m.metrics?.gain_over_static ?? [];
  const idx: number[] = [];
  m.classes.forEach((c, i) => {
    if (c !== 'decoupled' || !isNum(g[i]) || m.point_source?.[i] === 'inferred') return;
    if (reachableOnly && Array.isArray(m.reachable) && !m.reachable[i]) return;
    idx.push(i);
  });
  idx.sort((a, b) => (g[b] as number) - (g[a] as number) || a - b);
  return idx.slice(0, n);
}

function pointAxes(m: SweepMap, i: number): number[] {
  const st = axisStrides(m.axes);
  return m.axes.map((a, k) => a.values[Math.floor(i / st[k]) % a.values.length]);
}

/** A metric cell with its standard error when the map has one. */
function metricCell(m: SweepMap, n: string, i: number): SafeHtml {
  const v = m.metrics[n]?.[i];
  if (!isNum(v)) return html`<td class="num nc">${NOT_COMPUTED}</td>`;
  const se = stderrAt(m, n, i);
  return html`<td class="num">
    ${metricStyle(n).format(v)}${se !== null ? ` ± ${metricStyle(n).format(se)}` : ''}
  </td>`;
}

const TABLE_METRICS = ['external_mean_W', 'gain_over_static', 'ripple_rel', 'hops_per_s'];

function bestSection(m: SweepMap): SafeHtml {
  const withMask = Array.isArray(m.reachable);
  const best = bestPoints(m);
  const r = m.recommended;
  const rows = r && !best.includes(r.index) && m.classes[r.index] === 'decoupled' ? [...best, r.index] : best;
  const names = TABLE_METRICS.filter((n) => n in (m.metrics ?? {}));
  const shownNames = names.length > 0 ? names : orderedMetrics(m);
  const allDecoupled = bestPoints(m, Number.MAX_SAFE_INTEGER, false);
  const outOfReach = withMask ? allDecoupled.filter((i) => !m.reachable![i]) : [];
  const table =
    rows.length === 0
      ? html`<p class="note">
          No point of the sweep is decoupled with a computed gain over the mirror held
          still${withMask ? ' and within the actuator’s reach' : ''}.
        </p>`
      : html`<div class="keep">
          <table class="best">
            <thead>
              <tr>
                <th class="num">rank</th>
                ${m.axes.map((a) => html`<th class="num">${axisTitle(a)}</th>`)}${shownNames.map((n) => html`<th class="num">${metricStyle(n).short}</th>`)}${withMask ? html`<th>actuator can reach</th>` : ''}
                <th></th>
              </tr>
            </thead>
            <tbody>
              ${rows.map((i, k) => {
                const av = pointAxes(m, i);
                const isRec = r !== null && r.index === i;
                return html`<tr class="${isRec ? 'recommended' : ''}">
                  <td class="num">${k < best.length ? String(k + 1) : '—'}</td>
                  ${m.axes.map((a, j) => html`<td class="num">${fmtAxisValue(a.key, av[j])}</td>`)}${shownNames.map((n) => metricCell(m, n, i))}${withMask ? html`<td>${m.reachable![i] ? 'yes' : 'no'}</td>` : ''}
                  <td>${isRec ? '★ recommended' : ''}</td>
                </tr>`;
              })}
            </tbody>
          </table>
        </div>`;
  const further =
    outOfReach.length > 0
      ? html`<p class="note">
          ${outOfReach.length} further decoupled point(s) are beyond the actuator’s ratings; the best of them
          gains ${fmtRatio(m.metrics.gain_over_static?.[outOfReach[0]])} at
          ${m.axes.map((a, j) => `${keyWords(a.key)} ${fmtAxisValue(a.key, pointAxes(m, outOfReach[0])[j])}`).join(', ')}.
        </p>`
      : '';
  const recRow = (label: string, value: string | SafeHtml, nc = false) =>
    html`<tr>
      <th>${label}</th>
      <td class="num ${nc ? 'nc' : ''}">${value}</td>
    </tr>`;
  const rec = r
    ? html`<div class="keep">
        <h3>Recommended operating point${r.margin === false ? ' (no margin on this grid)' : ''}</h3>
        <table class="recommended-point">
          ${recRow('amplitude', fmtSI(r.amplitude_m, 'm'))}${recRow('frequency', fmtSI(r.frequency_Hz, 'Hz'))}${recRow('stroke (peak to peak)', fmtSI(r.stroke_m, 'm'))}${recRow('peak drive voltage', fmtSI(r.voltage_V, 'V'), !isNum(r.voltage_V))}${isNum(r.current_A) ? recRow('peak drive current (reactive)', fmtSI(r.current_A, 'A')) : ''}${isNum(r.utilisation) ? recRow('tightest amplifier rating', `${(100 * r.utilisation).toFixed(0)} % of ${r.limiting_key ?? 'its limit'}`) : ''}
          ${['external_mean_W', 'ripple_rel', 'gain_over_static', 'hops_per_s']
            .filter((n) => n in (m.metrics ?? {}))
            .map(
              (n) =>
                html`<tr>
                  <th>${metricStyle(n).label}</th>
                  ${metricCell(m, n, r.index)}
                </tr>`,
            )}
          <tr>
            <th>class there</th>
            <td>${classBadge(m.classes[r.index] ?? null)}</td>
          </tr>
          <tr>
            <th>margin</th>
            <td>
              ${
                r.margin === false
                  ? 'no margin on this grid: no decoupled point has decoupled neighbours in both amplitude and frequency; refine the grid around this point before relying on it'
                  : 'its neighbours in amplitude and frequency are decoupled too'
              }
            </td>
          </tr>
          <tr>
            <th>why this point</th>
            <td>${r.reason}</td>
          </tr>
        </table>
      </div>`
    : html`<div class="keep">
        <h3>Recommended operating point</h3>
        <p class="note">None: ${m.recommended_reason || 'no reason recorded'}.</p>
      </div>`;
  return html`<section id="best">
    <div class="keep">
      <h2>Best decoupled points${withMask ? ' the actuator can reach' : ''}</h2>
      <p class="note">
        Decoupled points${withMask ? ' within the actuator’s ratings' : ''} ranked by gain over the mirror
        held still (the ${BEST_POINTS}
        highest)${r && !best.includes(r.index) && rows.includes(r.index) ? ', and the recommended point below them' : ''}.
      </p>
      ${table}
    </div>
    ${further}${rec}
  </section>`;
}

/** How an axis's values are spaced, in words: "linear steps", "log steps" or "listed values". */
export function axisSpacing(a: MapAxis): string {
  const v = a.values;
  if (v.length < 3) return `${v.length} listed value${v.length === 1 ? '' : 's'}, ${a.scale} axis`;
  const even = (xs: number[]) => {
    const d = xs.slice(1).map((x, k) => x - xs[k]);
    return d.every((x) => Math.abs(x - d[0]) <= 1e-6 * Math.max(Math.abs(d[0]), 1e-300));
  };
  if (even(v)) return 'linear steps';
  if (v.every((x) => x > 0) && even(v.map(Math.log10))) return 'log steps';
  return `listed values (drawn on a ${a.scale} axis)`;
}

function countsSection(m: SweepMap): SafeHtml {
  const counts = new Map<string, number>();
  m.classes.forEach((c0, i) => {
    const c =
      c0 === null ? NOT_COMPUTED : m.point_source?.[i] === 'inferred' ? `${c0} (inferred, not run)` : c0;
    counts.set(c, (counts.get(c) ?? 0) + 1);
  });
  return html`<section id="overview">
    <h2>What was swept</h2>
    <table>
      <thead>
        <tr>
          <th>key</th>
          <th class="num">from</th>
          <th class="num">to</th>
          <th class="num">points</th>
          <th>spacing</th>
        </tr>
      </thead>
      <tbody>
        ${m.axes.map(
          (a) =>
            html`<tr>
              <td><code>${a.key}</code></td>
              <td class="num">${fmtAxisValue(a.key, a.values[0])}</td>
              <td class="num">${fmtAxisValue(a.key, a.values[a.values.length - 1])}</td>
              <td class="num">${a.values.length}</td>
              <td>${axisSpacing(a)}</td>
            </tr>`,
        )}
      </tbody>
    </table>
    <p class="note">
      ${m.finished_points} of ${m.total_points} points
      finished${
        (m.inferred_points ?? 0) > 0
          ? ` (computed), ${m.inferred_points} inferred by the refinement and hatched on the maps`
          : ''
      },
      ${m.failed_points} failed. Scenario SHA-256
      <code>${m.scenario_sha256}</code>.
    </p>
    <table>
      <thead>
        <tr>
          <th>class</th>
          <th class="num">points</th>
        </tr>
      </thead>
      <tbody>
        ${[...counts.entries()].map(
          ([c, n]) =>
            html`<tr>
              <td>${c === NOT_COMPUTED ? html`<span class="nc">${c}</span>` : classBadge(c)}</td>
              <td class="num">${n}</td>
            </tr>`,
        )}
      </tbody>
    </table>
  </section>`;
}

/** The sweep report page as an HTML string, from a SweepMap. */
export function buildSweepReportHtml(m: SweepMap, generatedAt: Date = new Date()): string {
  const plots: PlotSpec[] = [];
  const main = m.axes.length >= 2 ? twoAxisMaps(m, plots) : oneAxisPlots(m, plots);
  const body = html`${countsSection(m)}${main}${bestSection(m)}${glossarySection(SWEEP_TERMS)}`;
  const name = typeof m.name === 'string' ? m.name : 'unnamed sweep';
  return renderPage({
    kind: 'sweep',
    title: `${name} — dithercav sweep`,
    heading: name,
    subheading: `${m.axes.map((a) => `${a.key} (${a.values.length})`).join(' × ')} · ${m.finished_points} of ${m.total_points} points finished`,
    body,
    plots,
    footer: `Map written by dithercav ${m.tool_version ?? '(version not recorded, before 0.2)'}; this page written by dithercav ${TOOL_VERSION} from map.json on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/**
 * Read `map.json` in a sweep folder (validated against the contract, results/read.ts) and
 * write its report.html. Returns the path written; InputError (file and key path) for a
 * missing, damaged or nonsensical map, in which case nothing is written.
 */
export function writeSweepReport(dir: string): string {
  const m = readSweepMap(dir);
  const out = join(dir, SWEEP_FILES.report);
  writeFileSync(out, buildSweepReportHtml(m));
  return out;
}
