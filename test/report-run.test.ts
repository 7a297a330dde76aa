import { readFileSync, writeFileSync, mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import {
  buildRunReportHtml,
  groupSeries,
  plotlyBundle,
  scenarioRows,
  writeRunReport,
  INTERFACE_MISMATCH_LIMIT,
  envelope,
  ZOOM_PERIODS,
} from '../src/report';
import { InputError } from '../src/scenario/errors';
import { formatSI } from '../src/scenario/units';
import { makeRunArtifacts, writeRunFolder } from './fixtures/report/make-fixtures';

// Layout fixtures (test/fixtures/report/make-fixtures.ts): shapes of real result files
// filled from closed-form curves; the checks compare the page with the files it was given.

const root = scratchDir('report-run');

type Plot = { id: string; data: Record<string, unknown>[]; layout: Record<string, unknown> };

/** The page without the plotting bundle, white space between tags removed (the source layout is Prettier's). */
function own(page: string): string {
  return page.replace(plotlyBundle(), '').replace(/>\s+</g, '><');
}
function plotsOf(page: string): Plot[] {
  const m = /<script type="application\/json" id="report-data">([^<]*)<\/script>/.exec(page);
  return m ? (JSON.parse(m[1]) as { plots: Plot[] }).plots : [];
}
/** The value cell following a row heading (the first <td> after <th>label</th>). */
function rowValue(page: string, label: string): string {
  const i = page.indexOf(`<th>${label}</th>`);
  if (i < 0) throw new Error(`no row ${label}`);
  const m = /<td[^>]*>([^<]*)<\/td>/.exec(page.slice(i));
  return m ? m[1] : '';
}

describe('run report', () => {
  const a = makeRunArtifacts({ actuator: true, interfaceMismatch: 0.08 });
  const dir = join(root, 'run');
  writeRunFolder(dir, a);
  const out = writeRunReport(dir);
  const page = readFileSync(out, 'utf8');
  const text = own(page);
  const plots = plotsOf(page);

  it('is written as report.html in the run folder', () => {
    expect(out).toBe(join(dir, 'report.html'));
  });

  it('shows the class and its reason in the verdict', () => {
    const verdict = text.slice(text.indexOf('id="verdict"'), text.indexOf('id="compare"'));
    expect(verdict).toContain('>decoupled</span>');
    expect(verdict).toContain(a.summary.driven!.class_reason);
  });

  it('writes scenario quantities with the SI unit the schema gives their key', () => {
    const rows = scenarioRows(a.summary.scenario);
    const get = (p: string): string | undefined => rows.find((r) => r.path === p)?.text;
    expect(get('laser.cavity_length')).toBe(formatSI(0.22, 'm', 6));
    expect(get('drive.frequency')).toBe(formatSI(140e3, 'Hz', 6));
    expect(get('laser.gain.saturation_power')).toBe(formatSI(0.3, 'W', 6));
    expect(get('laser.gain.pump_ratio')).toBe('1.8');
  });

  it('draws the still-mirror curve up and down and the per-rest-position means from the saved files', () => {
    const p = plots.find((x) => x.id === 'plot-static')!;
    expect(p.data[0].x).toEqual(a.static_curve!.position_m);
    expect(p.data[0].y).toEqual(a.static_curve!.external_up_W);
    expect(p.data[1].y).toEqual(a.static_curve!.external_down_W);
    expect(p.data[2].x).toEqual(a.summary.driven!.offset_positions_m);
    expect(p.data[2].y).toEqual(a.summary.driven!.external_mean_by_offset_W.values);
  });

  it('draws every saved trace series once as a zoom of the first drive periods, with a mark at each period', () => {
    const zoomPlots = plots.filter((x) => /^plot-trace-\d+$/.test(x.id));
    const t = a.traces!.t_s;
    const T = a.traces!.drive_period_s!;
    const end = t[0] + Math.min(ZOOM_PERIODS, Math.floor((t[t.length - 1] - t[0]) / T)) * T;
    const keep = t.map((x, i) => (x <= end ? i : -1)).filter((i) => i >= 0);
    const drawn = zoomPlots.flatMap((p) => p.data.map((d) => d.y));
    expect(drawn).toHaveLength(a.traces!.series.length);
    for (const s of a.traces!.series) expect(drawn).toContainEqual(keep.map((i) => s.values[i]));
    for (const p of zoomPlots) expect(p.data[0].x).toEqual(keep.map((i) => t[i]));
    // independent count: multiples of T inside [t0, end of the zoom]
    let expected = 0;
    for (let k = 0; k * T <= end + 1e-18; k++) if (k * T >= t[0]) expected++;
    expect((zoomPlots[0].layout.shapes as unknown[]).length).toBe(expected);
  });

  it('draws the whole window as an envelope per drive period: min, max and mean of each period', () => {
    const envPlots = plots.filter((x) => x.id.startsWith('plot-trace-env-'));
    expect(envPlots.length).toBe(groupSeries(a.traces!.series).length);
    const t = a.traces!.t_s;
    const T = a.traces!.drive_period_s!;
    const s = a.traces!.series[0];
    const env = envPlots[0].data;
    // the first period checked by a plain filter over the saved samples
    const first = s.values.filter((_, i) => t[i] - t[0] < T) as number[];
    expect((env[0].y as number[])[0]).toBe(Math.max(...first));
    expect((env[1].y as number[])[0]).toBe(Math.min(...first));
    // mean of the same samples; tolerance: summation order only
    expect((env[2].y as number[])[0]).toBeCloseTo(first.reduce((x, y) => x + y, 0) / first.length, 12);
    expect(env[1].fill).toBe('tonexty');
  });

  it('envelope: a window with no finite value is null, not 0', () => {
    const e = envelope([0, 1, 2, 3], [null, null, 5, 7], 2);
    expect(e.min).toEqual([null, 5]);
    expect(e.max).toEqual([null, 7]);
    expect(e.mean).toEqual([null, 6]);
  });

  it('keeps positions, speeds, gap power, laser output and per-mode powers on separate plots', () => {
    const groups = groupSeries(a.traces!.series).map((g) => [g.title, g.series.map((s) => s.key)]);
    expect(groups).toEqual([
      ['mirror position', ['mirror_position']],
      ['mirror speed', ['mirror_speed']],
      ['power in the gap', ['external_W', 'external_band_W']],
      ['laser output', ['laser_output_W']],
      ['power in each laser mode', ['mode_0_W', 'mode_1_W']],
    ]);
  });

  it('marks the drive harmonics inside the plotted range on the RIN spectrum', () => {
    const p = plots.find((x) => x.id === 'plot-rin')!;
    const fMax = Math.max(...a.spectra!.rin!.f_Hz);
    const inside = a.spectra!.drive_harmonics_Hz.filter((f) => f <= fMax);
    expect((p.layout.shapes as { x0: number }[]).map((s) => s.x0)).toEqual(inside);
    expect((p.layout.xaxis as { type: string }).type).toBe('log');
  });

  it('draws one optical spectrum per saved mode, the mode occupation and the hop phase histogram', () => {
    expect(plots.find((x) => x.id === 'plot-optical')!.data).toHaveLength(a.spectra!.optical.length);
    expect(plots.find((x) => x.id === 'plot-occupation')!.data[0].y).toEqual(
      a.summary.driven!.mode_occupation.map((m) => m.fraction),
    );
    expect(plots.find((x) => x.id === 'plot-hop-phase')!.data[0].y).toEqual(
      a.summary.driven!.hop_phase_histogram,
    );
  });

  it(`highlights an interface mismatch above ${INTERFACE_MISMATCH_LIMIT * 100} % and lists the warnings`, () => {
    expect(text).toMatch(
      /<tr class="flag"><th>interface mismatch at the output coupler[^<]*<\/th><td class="num">8 %<\/td>/,
    );
    expect(text).toContain('<code>layout-fixture</code>');
  });

  it('renders the actuator table generically, with a limit exceeded flagged', () => {
    expect(text).toContain('What the actuator has to deliver');
    expect(text).toMatch(
      /<tr class="flag"><th>reactive current<\/th><td class="num">700 mA<\/td><td class="num">500 mA<\/td><td>NO<\/td>/,
    );
  });
});

describe('run report with values not computed', () => {
  const a = makeRunArtifacts({ name: 'nulls', nulls: true, interfaceMismatch: 0.01 });
  const page = buildRunReportHtml(a);
  const text = own(page);

  it('shows a null as "not computed", never as 0', () => {
    expect(rowValue(text, 'gain over the mirror held still (mean over the same rest positions)')).toBe(
      'not computed',
    );
    expect(rowValue(text, 'critical speed (locking rule)')).toBe('not computed');
    expect(rowValue(text, 'beam radius at the return mirror')).toBe('not computed');
  });

  it('says which optional files were not saved instead of drawing empty plots', () => {
    expect(text).toContain('No time traces were saved');
    expect(text).toContain('No intensity-noise spectrum was saved');
    expect(text).toContain('The still-mirror reference was not computed');
    expect(plotsOf(page).map((p) => p.id)).not.toContain('plot-rin');
  });

  it('has no actuator section when the summary has no actuator table', () => {
    expect(text).not.toContain('What the actuator has to deliver');
  });

  it('does not flag an interface mismatch below the limit', () => {
    const b = buildRunReportHtml(makeRunArtifacts({ interfaceMismatch: 0.01 }));
    expect(own(b)).not.toMatch(/<tr class="flag"><th>mismatch/);
  });
});

describe('run report from hostile or broken files', () => {
  it('shows a scenario named <script>alert(1)</script> as text', () => {
    const name = '<script>alert(1)</script>';
    const a = makeRunArtifacts({ name });
    a.summary.driven!.class_reason = '<img src=x onerror=alert(2)>';
    a.summary.warnings.push({ code: '<b>', message: '</script><script>alert(3)</script>' });
    const text = own(buildRunReportHtml(a));
    expect(text).not.toContain(name);
    expect(text).not.toContain('<img');
    expect(text).not.toContain('<script>alert(3)');
    expect(text).toContain('<h1>&lt;script&gt;alert(1)&lt;/script&gt;</h1>');
  });

  it('a folder without summary.json is bad input naming the file', () => {
    const d = join(root, 'empty');
    mkdirSync(d, { recursive: true });
    expect(() => writeRunReport(d)).toThrow(InputError);
    expect(() => writeRunReport(d)).toThrow(
      /summary\.json: expected the summary of a run, found no such file/,
    );
  });

  it('a summary that is not JSON is bad input naming the file', () => {
    const d = join(root, 'broken');
    mkdirSync(d, { recursive: true });
    writeFileSync(join(d, 'summary.json'), '{"version": 1,');
    expect(() => writeRunReport(d)).toThrow(
      /broken[\\/]summary\.json: expected the summary of a run as JSON/,
    );
  });
});
