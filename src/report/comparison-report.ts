/**
 * `dithercav report DIR_A DIR_B`: one page comparing two designs from their saved results
 * (never re-simulated). Two run folders: every headline figure with both values and the
 * ratio B / A, the still-mirror curves and the noise spectra overlaid. Two sweep folders:
 * the class maps side by side and, when both maps share their axes, the difference of the
 * mean gap power and where one design decouples and the other does not.
 */
import { writeFileSync } from 'node:fs';
import type { RunArtifacts } from '../results/artifacts';
import type { SweepMap } from '../results/map';
import { RUN_CLASSES } from '../results/summary';
import { InputError } from '../scenario/errors';
import { classLegend } from './class-style';
import { fmtNum, fmtSI, isNum, NOT_COMPUTED } from './format';
import { axis, baseLayout, plotDiv, PlotSpec, renderPage } from './html';
import { readRunArtifacts, readSweepMap } from './read-results';
import { detectResultFolder } from './rebuild';
import { html, HtmlValue } from './safe-html';
import { classColorscale, heatmapOf, mapAxes, mapLayout } from './sweep-report';

/** The default file a comparison is written to, under reports/. */
export const COMPARISON_FILE = 'comparison.html';

function get(obj: unknown, path: string): unknown {
  let v: unknown = obj;
  for (const p of path.split('.')) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<string, unknown>)[p];
  }
  return v;
}

/** Headline figures of a run: summary path, label, unit ('' for a plain number). */
export const HEADLINE: [path: string, label: string, unit: string][] = [
  ['driven.class', 'class', ''],
  ['driven.external_mean_W', 'mean gap power', 'W'],
  ['driven.ripple_rel', 'ripple in the detection band', ''],
  ['driven.laser_output_mean_W', 'laser output', 'W'],
  ['driven.enhancement', 'enhancement', ''],
  ['driven.gain_over_static', 'gain over the mirror held still', ''],
  ['driven.incoherent_fraction', 'fraction of the phase-averaged level', ''],
  ['driven.hops_per_period', 'hops per drive period', ''],
  ['static.external_W.mean', 'still-mirror mean gap power', 'W'],
  ['free_running.intracavity_W', 'free-running intracavity power', 'W'],
  ['derived.feedback_efficiency', 'feedback efficiency', ''],
  ['derived.finesse_external', 'finesse of the gap', ''],
  ['derived.alignment.half_coupling_tilt_rad', 'tilt that halves the coupling', 'rad'],
  ['budget.through_return_mirror_W', 'through the return mirror', 'W'],
  ['budget.gap_element_loss_W', 'lost in the gap element', 'W'],
  ['peak_intensity.gap_waist_W_m2', 'peak intensity at the gap waist', 'W/m²'],
  ['drive.peak_speed_m_s', 'peak mirror speed', 'm/s'],
  ['actuator.actuator.voltage_peak_V', 'peak drive voltage', 'V'],
];

function fmtVal(v: unknown, unit: string): string {
  if (typeof v === 'string') return v;
  if (!isNum(v)) return NOT_COMPUTED;
  return unit ? fmtSI(v, unit) : fmtNum(v, 4);
}

/** B / A of two numbers, or '' when it has no meaning. */
export function ratioOf(a: unknown, b: unknown): number | null {
  if (!isNum(a) || !isNum(b)) return null;
  if (a === 0) return b === 0 ? 1 : null;
  return b / a;
}

function runsBody(a: RunArtifacts, b: RunArtifacts, la: string, lb: string, plots: PlotSpec[]): HtmlValue {
  const rows = HEADLINE.map(([p, label, unit]) => {
    const va = get(a.summary, p);
    const vb = get(b.summary, p);
    const r = ratioOf(va, vb);
    const same = typeof va === 'string' && typeof vb === 'string' ? (va === vb ? 'same' : 'differs') : '';
    return html`<tr>
      <th>${label}</th>
      <td class="num">${fmtVal(va, unit)}</td>
      <td class="num">${fmtVal(vb, unit)}</td>
      <td class="num" data-ratio="${r === null ? '' : String(r)}">${r === null ? same : fmtNum(r, 4)}</td>
    </tr>`;
  });
  const parts: HtmlValue[] = [
    html`<section id="headline">
      <h2>Headline figures</h2>
      <table id="headline-table">
        <tr>
          <th></th>
          <th>A: ${la}</th>
          <th>B: ${lb}</th>
          <th>B / A</th>
        </tr>
        ${rows}
      </table>
    </section>`,
  ];
  const sa = a.static_curve;
  const sb = b.static_curve;
  if (sa || sb) {
    const data: Record<string, unknown>[] = [];
    for (const [c, name, dash] of [
      [sa, 'A', 'solid'],
      [sb, 'B', 'dash'],
    ] as const) {
      if (!c) continue;
      data.push(
        {
          type: 'scatter',
          mode: 'lines',
          x: c.position_m,
          y: c.external_up_W,
          name: `${name}: up`,
          line: { dash },
        },
        {
          type: 'scatter',
          mode: 'lines',
          x: c.position_m,
          y: c.external_down_W,
          name: `${name}: down`,
          line: { dash },
        },
      );
    }
    plots.push({
      id: 'cmp-static',
      data,
      layout: baseLayout({ xaxis: axis('mirror position (m)'), yaxis: axis('gap power (W)') }),
    });
    parts.push(
      html`<section id="static">
        <h2>Gap power with the mirror held still</h2>
        ${plotDiv('cmp-static', 'A solid, B dashed')}
      </section>`,
    );
  }
  const ra = a.spectra?.rin;
  const rb = b.spectra?.rin;
  if (ra || rb) {
    const data: Record<string, unknown>[] = [];
    if (ra) data.push({ type: 'scatter', mode: 'lines', x: ra.f_Hz, y: ra.values, name: 'A' });
    if (rb)
      data.push({
        type: 'scatter',
        mode: 'lines',
        x: rb.f_Hz,
        y: rb.values,
        name: 'B',
        line: { dash: 'dash' },
      });
    plots.push({
      id: 'cmp-rin',
      data,
      layout: baseLayout({ xaxis: axis('frequency (Hz)', { type: 'log' }), yaxis: axis('RIN (dB/Hz)') }),
    });
    parts.push(
      html`<section id="rin">
        <h2>Relative intensity noise of the gap power</h2>
        ${plotDiv('cmp-rin', 'A solid, B dashed')}
      </section>`,
    );
  }
  return parts;
}

/** True when two maps have the same axes (keys and values, in order). */
export function sameGrid(a: SweepMap, b: SweepMap): boolean {
  if (a.axes.length !== b.axes.length) return false;
  return a.axes.every((ax, k) => {
    const bx = b.axes[k];
    return (
      ax.key === bx.key &&
      ax.values.length === bx.values.length &&
      ax.values.every(
        (v, i) => Math.abs(v - bx.values[i]) <= 1e-9 * Math.max(Math.abs(v), Math.abs(bx.values[i])),
      )
    );
  });
}

function mapsBody(a: SweepMap, b: SweepMap, la: string, lb: string, plots: PlotSpec[]): HtmlValue {
  const parts: HtmlValue[] = [];
  const classPlot = (m: SweepMap, id: string) => {
    const xy = mapAxes(m);
    if (!xy) return html`<p class="note">${id}: a one-axis map has no class map to draw.</p>`;
    plots.push({
      id,
      data: [
        {
          ...heatmapOf(
            m,
            m.classes.map((c) => (c === null ? null : RUN_CLASSES.indexOf(c))),
            xy,
          ),
          colorscale: classColorscale(),
          zmin: -0.5,
          zmax: RUN_CLASSES.length - 0.5,
          showscale: false,
        },
      ],
      layout: mapLayout(m, xy),
    });
    return plotDiv(id);
  };
  parts.push(
    html`<section id="classes">
      <h2>Class maps</h2>
      <div class="side-by-side" style="display:grid;grid-template-columns:1fr 1fr;gap:1em">
        <div>
          <h3>A: ${la}</h3>
          ${classPlot(a, 'cmp-class-a')}
        </div>
        <div>
          <h3>B: ${lb}</h3>
          ${classPlot(b, 'cmp-class-b')}
        </div>
      </div>
      ${classLegend()}
    </section>`,
  );
  if (!sameGrid(a, b)) {
    parts.push(
      html`<p class="note">The two maps have different axes, so no point-by-point difference is drawn.</p>`,
    );
    return parts;
  }
  const xy = mapAxes(a);
  const ga = a.metrics.external_mean_W ?? [];
  const gb = b.metrics.external_mean_W ?? [];
  const diff = ga.map((v, i) => (isNum(v) && isNum(gb[i]) ? (gb[i] as number) - v : null));
  // 0: both or neither decouple, 1: only A, 2: only B
  const only = a.classes.map((c, i) => {
    const d = b.classes[i];
    if (c === null || d === null) return null;
    const ia = c === 'decoupled';
    const ib = d === 'decoupled';
    return ia === ib ? 0 : ia ? 1 : 2;
  });
  const onlyA = only.filter((v) => v === 1).length;
  const onlyB = only.filter((v) => v === 2).length;
  if (xy) {
    plots.push({
      id: 'cmp-gap-diff',
      data: [
        {
          ...heatmapOf(a, diff, xy),
          colorscale: 'RdBu',
          zmid: 0,
          colorbar: { thickness: 14, len: 0.8, title: { text: 'W' } },
        },
      ],
      layout: mapLayout(a, xy),
    });
    plots.push({
      id: 'cmp-decoupled',
      data: [
        {
          ...heatmapOf(a, only, xy),
          colorscale: [
            [0, '#e4e7ec'],
            [0.33, '#e4e7ec'],
            [0.34, '#0e5e6f'],
            [0.66, '#0e5e6f'],
            [0.67, '#c2571a'],
            [1, '#c2571a'],
          ],
          zmin: -0.5,
          zmax: 2.5,
          showscale: false,
        },
      ],
      layout: mapLayout(a, xy),
    });
  }
  parts.push(
    html`<section id="difference">
      <h2>Mean gap power, B minus A</h2>
      ${xy ? plotDiv('cmp-gap-diff', 'blue: B holds more light; red: A does') : ''}
      <h2>Where one design decouples and the other does not</h2>
      <p id="decouple-counts">Only A decouples at ${onlyA} points; only B at ${onlyB} points.</p>
      ${xy ? plotDiv('cmp-decoupled', 'petrol: only A decouples; rust: only B; grey: both or neither') : ''}
    </section>`,
  );
  return parts;
}

/** The comparison page of two result folders (both runs or both sweeps). */
export function buildComparisonHtml(dirA: string, dirB: string, generatedAt: Date = new Date()): string {
  const ka = detectResultFolder(dirA);
  const kb = detectResultFolder(dirB);
  const plots: PlotSpec[] = [];
  let body: HtmlValue;
  let what: string;
  if (ka === 'run' && kb === 'run') {
    body = runsBody(readRunArtifacts(dirA), readRunArtifacts(dirB), dirA, dirB, plots);
    what = 'two runs';
  } else if (ka === 'sweep' && kb === 'sweep') {
    body = mapsBody(readSweepMap(dirA), readSweepMap(dirB), dirA, dirB, plots);
    what = 'two maps';
  } else {
    throw new InputError(null, [
      {
        path: '',
        message: `expected two run folders (summary.json) or two sweep folders (map.json), found ${ka ?? 'no result folder'} in ${dirA} and ${kb ?? 'no result folder'} in ${dirB}`,
      },
    ]);
  }
  return renderPage({
    kind: 'comparison',
    title: `${dirA} vs ${dirB} — dithercav comparison`,
    heading: `A: ${dirA} · B: ${dirB}`,
    subheading: `comparison of ${what}`,
    body: html`${body}`,
    plots,
    footer: `Written by dithercav from the saved results on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/** Write the comparison of dirA and dirB to outFile; returns it. */
export function writeComparison(dirA: string, dirB: string, outFile: string): string {
  writeFileSync(outFile, buildComparisonHtml(dirA, dirB));
  return outFile;
}
