/**
 * `dithercav report DIR_A DIR_B`: two designs side by side, from saved results only.
 * The same folder against itself must show ratio 1 and no difference everywhere; a real
 * browser draws the page (skipped only without /usr/bin/chromium or $CHROMIUM_PATH).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildComparisonHtml, HEADLINE, ratioOf, sameGrid } from '../src/report/comparison-report';
import {
  makeRunArtifacts,
  makeSweepMap,
  writeRunFolder,
  writeSweepFolder,
} from './fixtures/report/make-fixtures';
import { findChromium, PipeBrowser } from './fixtures/report/cdp';
import { InputError } from '../src/scenario/errors';
import { buildYieldReportHtml } from '../src/report/yield-report';
import type { YieldSummary } from '../src/results/yield';

let root = '';
const dirs = { run: '', sweep: '' };

beforeAll(() => {
  root = mkdtempSync(join(tmpdir(), 'dithercav-compare-'));
  dirs.run = join(root, 'run');
  dirs.sweep = join(root, 'sweep');
  writeRunFolder(dirs.run, makeRunArtifacts({ actuator: true }));
  const map = makeSweepMap({ withFailures: true });
  // the layout fixture has no gap power; any per-point numbers serve for a self-comparison
  map.metrics.external_mean_W = map.metrics.enhancement.map((v) => (v === null ? null : 0.01 * v));
  writeSweepFolder(dirs.sweep, map);
});
afterAll(() => {
  if (root) rmSync(root, { recursive: true, force: true });
});

describe('comparison of two designs', () => {
  it('a run folder against itself: every numeric headline figure has ratio 1', () => {
    const page = buildComparisonHtml(dirs.run, dirs.run);
    const ratios = [...page.matchAll(/data-ratio="([^"]*)"/g)].map((m) => m[1]);
    expect(ratios.length).toBe(HEADLINE.length);
    const numeric = ratios.filter((r) => r !== '');
    expect(numeric.length).toBeGreaterThan(5);
    // x / x = 1 exactly in floating point for every finite non-zero x (IEEE 754 division)
    for (const r of numeric) expect(Number(r)).toBe(1);
    expect(page).toContain('cmp-static');
  });

  it('a sweep folder against itself: same grid, no point where only one design decouples, zero difference', () => {
    const page = buildComparisonHtml(dirs.sweep, dirs.sweep);
    expect(page).toContain('Only A decouples at 0 points; only B at 0 points.');
    const data = JSON.parse(
      /<script type="application\/json" id="report-data">([\s\S]*?)<\/script>/.exec(page)![1],
    );
    const diff = data.plots.find((p: { id: string }) => p.id === 'cmp-gap-diff');
    const z = (diff.data[0].z as (number | null)[][]).flat().filter((v) => v !== null);
    expect(z.length).toBeGreaterThan(0);
    for (const v of z) expect(v).toBe(0);
  });

  it('ratios and grids: what counts as comparable', () => {
    expect(ratioOf(2, 3)).toBeCloseTo(1.5, 15);
    expect(ratioOf(0, 0)).toBe(1);
    expect(ratioOf(0, 1)).toBeNull();
    expect(ratioOf('decoupled', 'decoupled')).toBeNull();
    const m = makeSweepMap({});
    expect(sameGrid(m, m)).toBe(true);
    expect(sameGrid(m, { ...m, axes: m.axes.slice(0, 1) })).toBe(false);
  });

  it('a run folder against a sweep folder is bad input', () => {
    expect(() => buildComparisonHtml(dirs.run, dirs.sweep)).toThrow(InputError);
  });
});

const chromium = findChromium();
describe.skipIf(!chromium)('the comparison page in headless Chromium', () => {
  let browser: PipeBrowser;
  beforeAll(() => {
    browser = PipeBrowser.launch(chromium!);
  });
  afterAll(async () => {
    if (browser) await browser.close();
  });
  const yieldPage = (): string => {
    // a hand-made yield summary of the right shape (layout only, not physics)
    const y: YieldSummary = {
      name: 'layout-fixture-yield',
      draws_planned: 8,
      draws_finished: 8,
      draws_failed: 0,
      seed: 1,
      tolerances: [{ key: 'external.length', distribution: 'normal', spread: 1e-5, nominal: 0.09 }],
      yield_decoupled: 0.75,
      gap_power_floor_W: 0.05,
      yield_above_floor: 0.5,
      yield_both: 0.5,
      gap_power_percentiles_W: { p5: 0.03, p25: 0.04, p50: 0.06, p75: 0.08, p95: 0.1 },
      ripple_percentiles: { p5: 0.001, p25: 0.002, p50: 0.003, p75: 0.004, p95: 0.005 },
      histogram: { edges_W: [0.03, 0.05, 0.07, 0.09, 0.11], counts: [2, 2, 3, 1] },
      ranking_method: 'Spearman rank correlation',
      ranking: [{ key: 'external.length', rho_gap_power: -0.7, rho_ripple: 0.2 }],
      class_counts: { decoupled: 6, modulated: 2 },
    };
    return buildYieldReportHtml(y);
  };
  for (const kind of ['run', 'sweep', 'yield'] as const) {
    it(`${kind === 'yield' ? 'yield report' : `${kind} folders`}: every declared plot drawn, no error, no request`, async () => {
      const file = join(root, `compare-${kind}.html`);
      writeFileSync(file, kind === 'yield' ? yieldPage() : buildComparisonHtml(dirs[kind], dirs[kind]));
      const url = pathToFileURL(file).href;
      const { session, events } = await browser.open(url);
      const probe = await browser.evaluate<{ declared: string[]; drawn: { id: string; svg: boolean }[] }>(
        session,
        `(() => ({
          declared: JSON.parse(document.getElementById('report-data').textContent).plots.map((p) => p.id),
          drawn: Array.from(document.querySelectorAll('.js-plotly-plot')).map((el) => ({ id: el.id, svg: !!el.querySelector('svg.main-svg') })),
        }))()`,
      );
      expect(events.consoleErrors).toEqual([]);
      expect(events.exceptions).toEqual([]);
      expect(
        events.requests.filter((u) => u !== url && !u.startsWith('data:') && !u.startsWith('blob:')),
      ).toEqual([]);
      expect(probe.declared.length).toBeGreaterThan(0);
      expect(probe.drawn.map((d) => d.id)).toEqual(probe.declared);
      expect(probe.drawn.every((d) => d.svg)).toBe(true);
    });
  }
});
