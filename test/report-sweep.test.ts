import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import {
  axisSpacing,
  bestPoints,
  buildSweepReportHtml,
  logTicks,
  grid,
  mapAxes,
  plotlyBundle,
  writeSweepReport,
} from '../src/report';
import { RUN_CLASSES } from '../src/results/summary';
import { InputError } from '../src/scenario/errors';
import {
  layoutClass,
  layoutMetric,
  makeSweepMap,
  METRICS,
  writeSweepFolder,
} from './fixtures/report/make-fixtures';

// Layout fixtures: the map's values come from closed-form formulas in the generator, so
// each heatmap cell can be checked against the formula at the cell's own axis values.

const root = scratchDir('report-sweep');

type Plot = { id: string; data: Record<string, any>[]; layout: Record<string, any> }; // eslint-disable-line @typescript-eslint/no-explicit-any
function plotsOf(page: string): Plot[] {
  const m = /<script type="application\/json" id="report-data">([^<]*)<\/script>/.exec(page);
  return m ? (JSON.parse(m[1]) as { plots: Plot[] }).plots : [];
}

describe('sweep report, amplitude x frequency', () => {
  for (const frequencyFirst of [false, true]) {
    it(`puts frequency across and amplitude up, each cell the value at its own axes (${frequencyFirst ? 'frequency' : 'amplitude'} axis first in the file)`, () => {
      const m = makeSweepMap({ frequencyFirst, nA: 7, nF: 5 });
      const plots = plotsOf(buildSweepReportHtml(m));
      expect(plots.filter((p) => p.id.startsWith('map-metric-'))).toHaveLength(METRICS.length);
      for (const p of plots.filter((x) => x.id.startsWith('map-metric-'))) {
        const hm = p.data[0];
        expect(hm.type).toBe('heatmap');
        const amps = m.axes.find((a) => a.key === 'drive.amplitude')!.values;
        const freqs = m.axes.find((a) => a.key === 'drive.frequency')!.values;
        // log axes: cell edges at the geometric means of neighbouring values, one more edge than values
        expect(hm.x).toHaveLength(freqs.length + 1);
        expect(hm.y).toHaveLength(amps.length + 1);
        for (let i = 0; i + 1 < freqs.length; i++)
          expect(hm.x[i + 1]).toBeCloseTo(Math.sqrt(freqs[i] * freqs[i + 1]), 6);
        for (let i = 0; i + 1 < amps.length; i++)
          expect(hm.y[i + 1] / Math.sqrt(amps[i] * amps[i + 1])).toBeCloseTo(1, 12);
        // which metric is it? match it against the formula at one cell, then check every cell
        const metric = METRICS.find(
          (name) =>
            Math.abs(layoutMetric(name, amps[1], freqs[2]) - hm.z[1][2]) < 1e-12 &&
            Math.abs(layoutMetric(name, amps[5], freqs[0]) - hm.z[5][0]) < 1e-12,
        )!;
        expect(metric).toBeDefined();
        for (let iy = 0; iy < amps.length; iy++)
          for (let ix = 0; ix < freqs.length; ix++)
            expect(hm.z[iy][ix]).toBeCloseTo(layoutMetric(metric, amps[iy], freqs[ix]), 12);
      }
      const cls = plots.find((p) => p.id === 'map-class')!.data[0];
      const amps = m.axes.find((a) => a.key === 'drive.amplitude')!.values;
      const freqs = m.axes.find((a) => a.key === 'drive.frequency')!.values;
      for (let iy = 0; iy < amps.length; iy++)
        for (let ix = 0; ix < freqs.length; ix++)
          expect(RUN_CLASSES[cls.z[iy][ix]]).toBe(layoutClass(amps[iy], freqs[ix]));
    });
  }

  const m = makeSweepMap({ withFailures: true });
  const page = buildSweepReportHtml(m);
  const plots = plotsOf(page);
  const classMap = plots.find((p) => p.id === 'map-class')!;

  it('uses log axes where the sweep axis is log', () => {
    expect(classMap.layout.xaxis.type).toBe('log');
    expect(classMap.layout.yaxis.type).toBe('log');
  });

  it('leaves a failed point empty (null), not zero', () => {
    const xy = mapAxes(m)!;
    const z = grid(m, m.metrics.enhancement, xy);
    const nulls = z.flat().filter((v) => v === null).length;
    expect(nulls).toBe(m.failed_points);
    expect(classMap.data[0].z.flat().filter((v: unknown) => v === null).length).toBe(m.failed_points);
  });

  it('draws the speed rule A = v_c/(2 pi f), the onset, the boundary, the shaded reachable region and the recommended point on every map', () => {
    const amps = m.axes.find((a) => a.key === 'drive.amplitude')!.values;
    const lowest = Math.min(...amps);
    for (const p of plots) {
      const names = p.data.map((d) => d.name);
      expect(names).toEqual(
        expect.arrayContaining([
          'speed rule A = v_c/(2πf) (first-order estimate)',
          'decoupling boundary (measured)',
          'reachable by the actuator (shaded)',
          'recommended operating point',
        ]),
      );
      const rule = p.data.find((d) => d.name === 'speed rule A = v_c/(2πf) (first-order estimate)')!;
      expect(rule.x).toEqual(m.critical_curve!.map((c) => c.frequency_Hz));
      expect(rule.y).toEqual(m.critical_curve!.map((c) => c.amplitude_m));
      // each measured curve: a line only where the boundary lies between two grid amplitudes;
      // at the lowest amplitude it is marked "below the grid", absent it is "beyond the grid"
      for (const [curve, name] of [
        [m.decoupling_boundary!, 'decoupling boundary'],
        [m.onset_curve!, 'hop onset'],
      ] as const) {
        const line = p.data.find((d) => d.name === `${name} (measured)`);
        const below = p.data.find((d) => d.name === `${name}: below the grid`);
        const beyond = p.data.find((d) => d.name === `${name}: beyond the grid`);
        const expLine = curve.map((c) =>
          c.amplitude_m === null || c.amplitude_m <= lowest ? null : c.amplitude_m,
        );
        if (expLine.some((v) => v !== null)) expect(line!.y).toEqual(expLine);
        else expect(line).toBeUndefined();
        const expBelow = curve
          .filter((c) => c.amplitude_m !== null && c.amplitude_m <= lowest)
          .map((c) => c.frequency_Hz);
        const expBeyond = curve.filter((c) => c.amplitude_m === null).map((c) => c.frequency_Hz);
        expect(below ? below.x : []).toEqual(expBelow);
        expect(beyond ? beyond.x : []).toEqual(expBeyond);
      }
      const star = p.data.find((d) => d.name === 'recommended operating point')!;
      expect([star.x[0], star.y[0]]).toEqual([m.recommended!.frequency_Hz, m.recommended!.amplitude_m]);
      expect(star.text[0]).toContain('recommended operating point');
      const reach = p.data.find((d) => d.name === 'reachable by the actuator (shaded)')!;
      expect(reach.type).toBe('contour');
      expect(reach.contours.coloring).toBe('fill');
      // every cell appears as 2 x 2 contour nodes just inside its edges
      expect(reach.z.flat().filter((v: number) => v === 1).length).toBe(
        4 * m.reachable!.filter(Boolean).length,
      );
    }
  });

  it('titles every colour bar with what it shows and its unit, and the axes in words', () => {
    for (const p of plots.filter((x) => x.id.startsWith('map-metric-'))) {
      const title = p.data[0].colorbar.title.text as string;
      expect(title.length).toBeGreaterThan(3);
    }
    expect(classMap.layout.xaxis.title.text).toBe('drive frequency (Hz)');
    expect(classMap.layout.yaxis.title.text).toBe('drive amplitude (m)');
  });

  it('puts the four main metrics first, full size, and further metrics of the map after them', () => {
    const main = page.indexOf('<h3 class="fig-title">mode hops per second</h3>');
    const further = page.indexOf('Further metrics saved in the map');
    expect(main).toBeGreaterThan(0);
    expect(further).toBeGreaterThan(main);
    expect(page.indexOf('<h3 class="fig-title">peak mirror speed (m/s)</h3>')).toBeGreaterThan(further);
  });

  it('says so when the actuator reaches every point, and draws no outline then', () => {
    const all = makeSweepMap({ nA: 4, nF: 3 });
    all.reachable = all.reachable!.map(() => true);
    const p = buildSweepReportHtml(all);
    expect(p).toContain('The actuator can reach every point of the map');
    expect(plotsOf(p).every((x) => x.data.every((d) => d.type !== 'contour'))).toBe(true);
  });

  it('gives a legend of the classes in words', () => {
    for (const c of RUN_CLASSES) expect(page).toContain(`<b>${c}</b> — `);
  });

  it('ranks the best points: decoupled and reachable only, highest gain over static first (checked against a plain sort)', () => {
    const best = bestPoints(m, 10);
    const g = m.metrics.gain_over_static;
    const all = m.classes
      .map((_c, i) => i)
      .filter((i) => m.classes[i] === 'decoupled' && g[i] !== null && m.reachable![i]);
    const expected = [...all].sort((a, b) => g[b]! - g[a]! || a - b).slice(0, 10);
    expect(best).toEqual(expected);
    expect(best.length).toBeGreaterThan(0);
    // the recommended point is in the table, marked, with its class and figures
    const own = page
      .replace(plotlyBundle(), '')
      .replace(/>\s+</g, '><')
      .replace(/>\s+/g, '>')
      .replace(/\s+</g, '<');
    expect(own).toContain('★ recommended');
    expect(own).toMatch(/<th>gain over the mirror held still<\/th><td class="num">[^<]*x<\/td>/);
    expect(own).toMatch(/<th>class there<\/th><td><span class="badge"/);
  });

  it('marks a fallback recommendation "no margin on this grid" on the map and in the table', () => {
    const fb = makeSweepMap({});
    expect(fb.recommended).not.toBeNull();
    fb.recommended = { ...fb.recommended!, margin: false, reason: 'no margin on this grid: test' };
    const p = buildSweepReportHtml(fb);
    expect(p).toContain('Recommended operating point (no margin on this grid)');
    const star = plotsOf(p)[0].data.find((d) => d.name === 'recommended point (no margin on this grid)');
    expect(star).toBeDefined();
  });

  it('describes explicitly listed axis values as listed, not as linear steps', () => {
    expect(axisSpacing({ key: 'drive.frequency', values: [1e3, 2e3, 3e3], scale: 'linear' })).toBe(
      'linear steps',
    );
    expect(axisSpacing({ key: 'drive.frequency', values: [1e3, 1e4, 1e5], scale: 'log' })).toBe('log steps');
    expect(axisSpacing({ key: 'drive.frequency', values: [1e3, 2e3, 7e3], scale: 'linear' })).toMatch(
      /^listed values/,
    );
  });

  it('labels log ticks with SI prefixes and the unit, decades only when 1-2-5 steps would crowd', () => {
    const wide = logTicks(1e-9, 1e-3, 'm');
    expect(wide.tickvals).toEqual([1e-9, 1e-8, 1e-7, 1e-6, 1e-5, 1e-4, 1e-3]);
    expect(wide.ticktext.slice(0, 4)).toEqual(['1 nm', '10 nm', '100 nm', '1 µm']);
    const many = logTicks(1e3, 1e4, 'Hz');
    expect(many.tickvals).toEqual([1e3, 2e3, 5e3, 1e4]);
    expect(many.ticktext[0]).toBe('1 kHz');
  });
});

describe('sweep report, one axis', () => {
  it('draws line plots over the axis, no heatmap', () => {
    const m = makeSweepMap({ dims: 1 });
    const plots = plotsOf(buildSweepReportHtml(m));
    expect(plots.some((p) => p.data.some((d) => d.type === 'heatmap'))).toBe(false);
    const lines = plots.filter((p) => p.id.startsWith('line-metric-'));
    expect(lines).toHaveLength(METRICS.length);
    for (const p of lines) {
      expect(p.data[0].x).toEqual(m.axes[0].values);
      expect(p.layout.xaxis.type).toBe('log');
    }
    const cls = plots.find((p) => p.id === 'line-class')!;
    expect(cls.data[0].y).toEqual(m.classes);
  });
});

describe('sweep report files', () => {
  it('writes report.html beside map.json; a scenario name with markup shows as text', () => {
    const d = join(root, 'sweep');
    writeSweepFolder(d, makeSweepMap({ name: '<script>alert(1)</script>', nA: 4, nF: 3 }));
    const page = readFileSync(writeSweepReport(d), 'utf8').replace(plotlyBundle(), '');
    expect(page).not.toContain('<script>alert(1)</script>');
    expect(page).toContain('<h1>&lt;script&gt;alert(1)&lt;/script&gt;</h1>');
  });

  it('a map without axes or classes is bad input naming the file and the keys', () => {
    const d = join(root, 'bad');
    mkdirSync(d, { recursive: true });
    writeFileSync(join(d, 'map.json'), JSON.stringify({ name: 'x', metrics: {} }));
    expect(() => writeSweepReport(d)).toThrow(InputError);
    expect(() => writeSweepReport(d)).toThrow(
      /map\.json: axes: expected a list of at least one axis\n.*classes: expected a list/,
    );
  });
});
