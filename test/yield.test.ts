/**
 * Tolerance yield (docs/model.md §7): draws, their runs through the sweep machinery, the
 * yield summary and the command's input checks.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runSweep } from '../src/sweep/run-sweep';
import { planDraws, spearman, summariseYield, percentile } from '../src/sweep/yield';
import { runScenario } from '../src/simulate/run';
import { parseScenarioText } from '../src/scenario/load';

const ROOT = resolve(__dirname, '..');
const BIN = join(ROOT, 'bin', 'dithercav.js');
let tmp = '';

beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'dithercav-yield-'));
});
afterAll(() => {
  if (tmp) rmSync(tmp, { recursive: true, force: true });
});

/** A tiny driven case (about a second per run): the scenario text with a tolerances section. */
function tiny(vary: string, extra = ''): string {
  return `name: tiny-yield
laser:
  wavelength: 632.8 nm
  cavity_length: 30 cm
  rear_mirror: { reflectivity: 0.999, radius: flat }
  output_coupler: { reflectivity: 0.99, radius: flat }
  gain: { broadening: homogeneous, linewidth: 100 GHz, pump_ratio: 2, saturation_power: 1 mW, inversion_lifetime: 10 ns, spontaneous_power: 1e-15, max_modes: 1 }
external:
  length: 30 cm
  return_mirror: { reflectivity: 0.99 }
  feedback_efficiency: 0.8
  roundtrip_efficiency: 1
drive: { waveform: sine, amplitude: 300 nm, frequency: 1 MHz }
simulation: { engine: fast, drive_offsets: 2, periods: 4, static_positions: 16, seed: 3 }
analysis: { detection_bandwidth: 1 MHz }
tolerances:
  vary:
${vary}
${extra}`;
}

function load(text: string) {
  return parseScenarioText(text, 'tiny.yaml').scenario!;
}

describe('draws', () => {
  it('seeded draws repeat exactly and do not depend on N; another seed gives other draws', () => {
    const s = load(
      tiny(
        '    external.return_mirror.reflectivity: { normal: 0.002 }\n    drive.amplitude: { uniform: 50 nm }',
      ),
    );
    const a = planDraws(s, 5);
    const b = planDraws(s, 8);
    for (let i = 0; i < 5; i++) expect(b.pointAt(i).axes).toEqual(a.pointAt(i).axes);
    const other = load(
      tiny(
        '    external.return_mirror.reflectivity: { normal: 0.002 }\n    drive.amplitude: { uniform: 50 nm }',
        '  seed: 99',
      ),
    );
    expect(planDraws(other, 5).pointAt(0).axes).not.toEqual(a.pointAt(0).axes);
    // a uniform draw stays within +- its half width, in SI (50 nm)
    for (let i = 0; i < 8; i++)
      expect(Math.abs(b.pointAt(i).axes['drive.amplitude'] - 300e-9)).toBeLessThanOrEqual(50e-9);
    // a reflectivity draw stays valid (< 1): the distribution is truncated to what the key accepts
    for (let i = 0; i < 8; i++)
      expect(b.pointAt(i).axes['external.return_mirror.reflectivity']).toBeLessThan(1);
  });

  it('with every tolerance at zero, every draw equals the single run', async () => {
    const s = load(tiny('    external.length: { normal: 0 }\n    drive.amplitude: { uniform: 0 nm }'));
    const plan = planDraws(s, 3);
    const out = await runSweep(s, { outDir: join(tmp, 'zero'), inProcess: true, pointSet: plan });
    expect(out.finished).toBe(3);
    const single = runScenario(plan.base).summary;
    const lines = readFileSync(join(tmp, 'zero', 'points.ndjson'), 'utf8')
      .trim()
      .split('\n');
    for (const line of lines) {
      const rec = JSON.parse(line);
      // the same scenario and seed repeat bit for bit (common practice, no source: a seeded
      // run is deterministic)
      expect(rec.summary.driven.external_mean_W).toBe(single.driven!.external_mean_W);
    }
    const y = summariseYield(
      plan,
      s.name,
      out.map.classes.map((_, i) => JSON.parse(lines[i])),
    );
    expect(y.gap_power_percentiles_W.p5).toBe(single.driven!.external_mean_W);
    expect(y.gap_power_percentiles_W.p95).toBe(single.driven!.external_mean_W);
    // no key varied: no ranking value
    expect(y.ranking.every((r) => r.rho_gap_power === null)).toBe(true);
  });

  it('with a tolerance on one key only, the ranking names that key', async () => {
    const s = load(
      tiny(
        '    analysis.ripple_limit: { normal: 0 }\n    external.return_mirror.reflectivity: { uniform: 0.008 }\n    drive.frequency: { normal: 0 Hz }',
        '  gap_power_floor: 1 uW',
      ),
    );
    const plan = planDraws(s, 5);
    const out = await runSweep(s, { outDir: join(tmp, 'one'), inProcess: true, pointSet: plan });
    const recs = readFileSync(join(tmp, 'one', 'points.ndjson'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(out.finished).toBe(5);
    const y = summariseYield(plan, s.name, recs);
    expect(y.ranking[0].key).toBe('external.return_mirror.reflectivity');
    expect(y.ranking[0].rho_gap_power).not.toBeNull();
    expect(y.ranking.slice(1).every((r) => r.rho_gap_power === null)).toBe(true);
    expect(y.yield_above_floor).not.toBeNull();
    expect(y.histogram.counts.reduce((a, b) => a + b, 0)).toBe(5);
  });
});

describe('a yield of a scenario with an actuator', () => {
  it('finishes: the draw axis is no drive plane, so no operating point is sought on it', async () => {
    // the map of a yield is over draw numbers; rebuilding a draw from its axis value (as the
    // actuator reach of a drive map does) would apply the key 'draw' to the scenario
    const s = load(
      tiny(
        '    external.return_mirror.reflectivity: { uniform: 0.004 }',
        'actuator: { stroke_per_volt: 10 nm/V, capacitance: 50 nF, resonance: 4 MHz, max_voltage: 150 V }',
      ),
    );
    expect(s.actuator).toBeDefined();
    const plan = planDraws(s, 2);
    const out = await runSweep(s, { outDir: join(tmp, 'actuator'), inProcess: true, pointSet: plan });
    expect(out.finished).toBe(2);
    expect(out.map.recommended ?? null).toBeNull();
  });
});

describe('statistics of the yield', () => {
  it("Spearman's rank correlation: +1 and -1 for monotonic data, the textbook value with ties", () => {
    // any strictly monotonic relation has rho = +-1 (Spearman 1904)
    expect(spearman([1, 2, 3, 4, 5], [1, 8, 27, 64, 125])).toBeCloseTo(1, 12);
    expect(spearman([1, 2, 3, 4, 5], [5, 3, 2, 1, 0])).toBeCloseTo(-1, 12);
    // 1 - 6 sum d^2 / (n (n^2 - 1)) without ties: x ranks 1..5, y ranks 2,1,4,3,5: sum d^2 = 4,
    // rho = 1 - 24/120 = 0.8 (NIST/SEMATECH e-Handbook, rank correlation)
    expect(spearman([1, 2, 3, 4, 5], [20, 10, 40, 30, 50])).toBeCloseTo(0.8, 12);
    expect(spearman([1, 1, 1], [1, 2, 3])).toBeNull();
  });

  it('percentiles interpolate between order statistics (type 7)', () => {
    // Hyndman and Fan, Am. Stat. 50, 361 (1996), definition 7 (the R and NumPy default)
    expect(percentile([1, 2, 3, 4], 50)).toBeCloseTo(2.5, 12);
    expect(percentile([10, 20, 30, 40, 50], 25)).toBeCloseTo(20, 12);
    expect(percentile([10, 20, 30, 40, 50], 90)).toBeCloseTo(46, 12);
  });
});

describe('dithercav yield: bad input exits 2 with the key path', () => {
  const cli = (...args: string[]) => {
    const r = spawnSync(process.execPath, [BIN, ...args], {
      cwd: ROOT,
      encoding: 'utf8',
      env: { ...process.env, NO_COLOR: '1' },
    });
    return { code: r.status, out: r.stdout, err: r.stderr };
  };
  beforeAll(() => {
    if (!existsSync(join(ROOT, 'dist', 'cli', 'main.js')))
      throw new Error('dist/ is missing: run `npm run build` (npm test does it)');
  });
  it('a negative tilt tolerance', () => {
    const f = join(tmp, 'neg.yaml');
    writeFileSync(f, tiny('    external.return_mirror.tilt: { normal: -20 urad }'));
    const r = cli('yield', f, '--draws', '2', '--out', join(tmp, 'neg-out'), '--quiet');
    expect(r.code).toBe(2);
    expect(r.err).toContain('tolerances.vary');
    expect(r.err).toContain('external.return_mirror.tilt');
    expect(r.err).toContain('>= 0');
  });
  it('a tolerance on a key that is not a number', () => {
    const f = join(tmp, 'text.yaml');
    writeFileSync(f, tiny('    drive.waveform: { normal: 1 }'));
    const r = cli('yield', f, '--draws', '2', '--out', join(tmp, 'text-out'), '--quiet');
    expect(r.code).toBe(2);
    expect(r.err).toContain('drive.waveform');
  });
  it('N = 0 draws', () => {
    const f = join(tmp, 'n0.yaml');
    writeFileSync(f, tiny('    external.length: { normal: 1 um }'));
    const r = cli('yield', f, '--draws', '0', '--out', join(tmp, 'n0-out'), '--quiet');
    expect(r.code).toBe(2);
    expect(r.err).toContain('--draws');
  });
});
