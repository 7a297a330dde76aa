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
    label: 'enhancement (gap power / free-running intracavity power)',
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
    label: 'ripple in the detection band',
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
};
const METRIC_ORDER = ['enhancement', 'gain_over_static', 'ripple_rel', 'hops_per_s'];

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

function axisTitle(a: MapAxis): string {
  const unit = axisUnit(a.key);
  return unit === '' ? a.key : `${a.key} (${unit})`;
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

function curveTrace(
  c: CurvePoint[] | null,
  name: string,
  style: Record<string, unknown>,
  swapped: boolean,
): Record<string, unknown> | null {
  if (!Array.isArray(c)) return null;
  const pts = c.filter((p) => isNum(p.frequency_Hz));
  if (!pts.some((p) => isNum(p.amplitude_m))) return null;
  const f = pts.map((p) => p.frequency_Hz);
  const a = pts.map((p) => (isNum(p.amplitude_m) ? p.amplitude_m : null));
  return {
    type: 'scatter',
    mode: 'lines',
    name,
    x: swapped ? a : f,
    y: swapped ? f : a,
    connectgaps: false,
    hoverinfo: 'skip',
    line: style,
  };
}

function overlays(m: SweepMap, xy: { x: number; y: number }, drive: boolean): Record<string, unknown>[] {
  const out: Record<string, unknown>[] = [];
  if (drive) {
    const sw = false;
    const c1 = curveTrace(
      m.critical_curve,
      'speed rule A = v_c/(2πf)',
      { color: '#111111', width: 2, dash: 'dash' },
      sw,
    );
    const c2 = curveTrace(m.onset_curve, 'hopping onset (measured)', { color: '#ff4fd8', width: 2.5 }, sw);
    const c3 = curveTrace(
      m.decoupling_boundary,
      'decoupling boundary (measured)',
      { color: '#ffffff', width: 3 },
      sw,
    );
    for (const c of [c1, c2, c3]) if (c) out.push(c);
  }
  const inferred = inferredTrace(m, xy);
  if (inferred) out.push(inferred);
  if (
    Array.isArray(m.reachable) &&
    m.reachable.length === m.total_points &&
    m.reachable.some(Boolean) &&
    !m.reachable.every(Boolean)
  ) {
    out.push({
      type: 'contour',
      name: 'reachable by the actuator',
      x: m.axes[xy.x].values,
      y: m.axes[xy.y].values,
      z: grid(
        m,
        m.reachable.map((r) => (r ? 1 : 0)),
        xy,
      ),
      showscale: false,
      contours: { start: 0.5, end: 0.5, size: 1, coloring: 'none' },
      line: { color: '#1f5fbf', width: 2.5, dash: 'dot' },
      hoverinfo: 'skip',
      showlegend: true,
    });
  }
  const r = m.recommended;
  if (r && isNum(r.amplitude_m) && isNum(r.frequency_Hz) && drive) {
    out.push({
      type: 'scatter',
      mode: 'markers',
      name: 'recommended operating point',
      x: [r.frequency_Hz],
      y: [r.amplitude_m],
      marker: { symbol: 'star', size: 16, color: '#ffd23f', line: { color: '#111111', width: 1.5 } },
      hoverinfo: 'skip',
    });
  } else if (r && !drive && r.axes) {
    const xk = m.axes[xy.x].key;
    const yk = m.axes[xy.y].key;
    if (isNum(r.axes[xk]) && isNum(r.axes[yk])) {
      out.push({
        type: 'scatter',
        mode: 'markers',
        name: 'recommended operating point',
        x: [r.axes[xk]],
        y: [r.axes[yk]],
        marker: { symbol: 'star', size: 16, color: '#ffd23f', line: { color: '#111111', width: 1.5 } },
        hoverinfo: 'skip',
      });
    }
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
        lines.push(
          `${plotText(metricStyle(name).label)}: ${isNum(v) ? metricStyle(name).format(v) : NOT_COMPUTED}`,
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
  if (!Array.isArray(m.reachable)) return 'no actuator was described, so no reachable region is drawn; ';
  if (m.reachable.every(Boolean)) return 'the actuator can reach every point of the map; ';
  if (!m.reachable.some(Boolean)) return 'the actuator can reach no point of the map; ';
  return 'blue dotted outline: what the actuator can reach; ';
}

/** The metrics the brief puts first, in this order, when present. */
function primaryMetrics(m: SweepMap): string[] {
  return METRIC_ORDER.filter((n) => n in (m.metrics ?? {}));
}

function orderedMetrics(m: SweepMap): string[] {
  const names = Object.keys(m.metrics ?? {});
  return [
    ...METRIC_ORDER.filter((n) => names.includes(n)),
    ...names.filter((n) => !METRIC_ORDER.includes(n)).sort(),
  ];
}

export function mapLayout(m: SweepMap, xy: { x: number; y: number }): Record<string, unknown> {
  const ax = m.axes[xy.x];
  const ay = m.axes[xy.y];
  return baseLayout({
    height: 460,
    xaxis: axis(plotText(axisTitle(ax)), {
      type: ax.scale === 'log' ? 'log' : 'linear',
      range: gridRange(ax),
      showgrid: false,
    }),
    yaxis: axis(plotText(axisTitle(ay)), {
      type: ay.scale === 'log' ? 'log' : 'linear',
      range: gridRange(ay),
      showgrid: false,
    }),
    legend: { orientation: 'h', x: 0, y: -0.2, yanchor: 'top', bgcolor: '#e6e8ec' },
    margin: { l: 80, r: 20, t: 12, b: 60 },
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
      Move the pointer over a cell for its values.
      ${
        drive
          ? 'Black dashed: the speed rule A = v_c/(2πf); red: where hops start (measured); white: the decoupling boundary (measured); '
          : ''
      }${reachNote(m)}${m.recommended ? 'star: the recommended operating point. ' : ''}${
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
        type: 'heatmap',
        x: cellEdges(m.axes[xy.x]),
        y: cellEdges(m.axes[xy.y]),
        z: grid(m, classIdx, xy),
        text,
        hovertemplate: '%{text}<extra></extra>',
        colorscale: classColorscale(),
        zmin: -0.5,
        zmax: RUN_CLASSES.length - 0.5,
        showscale: false,
        hoverongaps: false,
      },
      ...over,
    ],
    layout: mapLayout(m, xy),
  });
  parts.push(html`<h3>Class of each point</h3>`, plotDiv('map-class'), classLegend());
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
          type: 'heatmap',
          x: cellEdges(m.axes[xy.x]),
          y: cellEdges(m.axes[xy.y]),
          z: grid(m, m.metrics[name], xy),
          text,
          hovertemplate: '%{text}<extra></extra>',
          colorscale: st.colorscale,
          showscale: true,
          hoverongaps: false,
          colorbar: { thickness: 14, len: 0.8 },
        },
        ...over,
      ],
      layout,
    });
    if (isPrimary) parts.push(html`<h3>${st.label}</h3>`, plotDiv(id));
    else
      extra.push(
        html`<div>
          <h3>${st.label}${unitOfKey(name) && unitOfKey(name) !== '%' ? ` (${unitOfKey(name)})` : ''}</h3>
          ${plotDiv(id)}
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
    parts.push(html`<h3>${st.label}</h3>`, plotDiv(id));
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
  parts.push(html`<h3>Class along the axis</h3>`, plotDiv('line-class'), classLegend());
  return html`<section id="lines">
    <h2>Along the swept key</h2>
    ${parts}
  </section>`;
}

/** Indices of the computed (not inferred) decoupled points with the highest gain over static, best first (at most `n`). */
export function bestPoints(m: SweepMap, n = BEST_POINTS): number[] {
  const g = m.metrics?.gain_over_static ?? [];
  const idx: number[] = [];
  m.classes.forEach((c, i) => {
    if (c === 'decoupled' && isNum(g[i]) && m.point_source?.[i] !== 'inferred') idx.push(i);
  });
  idx.sort((a, b) => (g[b] as number) - (g[a] as number) || a - b);
  return idx.slice(0, n);
}

function pointAxes(m: SweepMap, i: number): number[] {
  const st = axisStrides(m.axes);
  return m.axes.map((a, k) => a.values[Math.floor(i / st[k]) % a.values.length]);
}

function bestSection(m: SweepMap): SafeHtml {
  const best = bestPoints(m);
  const names = primaryMetrics(m).length > 0 ? primaryMetrics(m) : orderedMetrics(m);
  const table =
    best.length === 0
      ? html`<p class="note">No point of the sweep is decoupled with a computed gain over static.</p>`
      : html`<table>
          <thead>
            <tr>
              <th class="num">rank</th>
              ${m.axes.map((a) => html`<th class="num">${axisTitle(a)}</th>`)}${names.map((n) => html`<th class="num">${metricStyle(n).short}</th>`)}${Array.isArray(m.reachable) ? html`<th>actuator can reach</th>` : ''}
            </tr>
          </thead>
          <tbody>
            ${best.map((i, r) => {
              const av = pointAxes(m, i);
              return html`<tr>
                <td class="num">${r + 1}</td>
                ${m.axes.map((a, k) => html`<td class="num">${fmtAxisValue(a.key, av[k])}</td>`)}${names.map(
                  (n) => {
                    const v = m.metrics[n]?.[i];
                    return isNum(v)
                      ? html`<td class="num">${metricStyle(n).format(v)}</td>`
                      : html`<td class="num nc">${NOT_COMPUTED}</td>`;
                  },
                )}${Array.isArray(m.reachable) ? html`<td>${m.reachable[i] ? 'yes' : 'no'}</td>` : ''}
              </tr>`;
            })}
          </tbody>
        </table>`;
  const r = m.recommended;
  const rec = r
    ? html`<h3>Recommended operating point</h3>
        <table>
          <tr>
            <th>amplitude</th>
            <td class="num">${fmtSI(r.amplitude_m, 'm')}</td>
          </tr>
          <tr>
            <th>frequency</th>
            <td class="num">${fmtSI(r.frequency_Hz, 'Hz')}</td>
          </tr>
          <tr>
            <th>stroke</th>
            <td class="num">${fmtSI(r.stroke_m, 'm')}</td>
          </tr>
          <tr>
            <th>drive voltage</th>
            <td class="num ${isNum(r.voltage_V) ? '' : 'nc'}">${fmtSI(r.voltage_V, 'V')}</td>
          </tr>
          ${
            isNum(r.current_A)
              ? html`<tr>
                  <th>drive current (reactive)</th>
                  <td class="num">${fmtSI(r.current_A, 'A')}</td>
                </tr>`
              : ''
          }
          ${
            isNum(r.utilisation)
              ? html`<tr>
                  <th>tightest amplifier rating</th>
                  <td class="num">
                    ${(100 * r.utilisation).toFixed(0)} % of ${r.limiting_key ?? 'its limit'}
                  </td>
                </tr>`
              : ''
          }
          <tr>
            <th>class there</th>
            <td>${classBadge(m.classes[r.index] ?? null)}</td>
          </tr>
          <tr>
            <th>why this point</th>
            <td>${r.reason}</td>
          </tr>
        </table>`
    : html`<h3>Recommended operating point</h3>
        <p class="note">None: ${m.recommended_reason || 'no reason recorded'}.</p>`;
  return html`<section id="best">
    <h2>Best decoupled points</h2>
    <p class="note">
      Decoupled points ranked by gain over the mirror held still (the ${BEST_POINTS} highest).
    </p>
    ${table}${rec}
  </section>`;
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
          <th>scale</th>
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
              <td>${a.scale}</td>
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
  const body = html`${countsSection(m)}${main}${bestSection(m)}`;
  const name = typeof m.name === 'string' ? m.name : 'unnamed sweep';
  return renderPage({
    kind: 'sweep',
    title: `${name} — dithercav sweep`,
    heading: name,
    subheading: `${m.axes.map((a) => `${a.key} (${a.values.length})`).join(' × ')} · ${m.finished_points} of ${m.total_points} points finished`,
    body,
    plots,
    footer: `Written by dithercav ${TOOL_VERSION} from map.json on ${generatedAt.toISOString()}; nothing was re-simulated.`,
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
