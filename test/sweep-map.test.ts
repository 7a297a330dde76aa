/**
 * map.json from synthetic points: metric arrays in grid order, the mode-hopping onset and
 * decoupling boundary interpolated in log amplitude, and the analytic curve
 * A = v_c / (2 pi f) (MODEL.md section 4: peak speed 2 pi f A of a sine equals v_c).
 */
import { describe, expect, it } from 'vitest';
import { buildSweepMap, firstOnset, median } from '../src/sweep/map';
import { failedPointSummary } from '../src/sweep/persist';
import type { PointRecord, PointSummary } from '../src/sweep/persist';
import type { MapAxis } from '../src/results/map';
import type { RunClass } from '../src/results/summary';

function okPoint(
  index: number,
  axes: Record<string, number>,
  cls: RunClass,
  hopsPerPeriod: number,
  vc: number | null,
): PointRecord {
  const summary = {
    ...failedPointSummary(''),
    status: 'ok',
    message: null,
    class: cls,
    class_reason: `synthetic ${cls}`,
    driven: {
      enhancement: 10 + index,
      gain_over_static: 2,
      ripple_rel: 0.05,
      ripple_full_band_rel: 0.5,
      hops_per_s: hopsPerPeriod * 1000,
      hops_per_period: hopsPerPeriod,
      external_mean_W: 1,
      laser_output_mean_W: 0.01,
      class: cls,
      class_reason: '',
    },
    drive: { critical_speed_m_s: vc, peak_speed_m_s: 1 },
  } as unknown as PointSummary;
  return { index, axes, summary, wall_s: 0 };
}

// Relative tolerance for products of a few floating-point operations.
const REL = 1e-12;

describe('sweep map', () => {
  it('interpolates an onset as the geometric mean of the last clear and first positive amplitude', () => {
    // sqrt(1e-8 * 1e-7) = 10^-7.5 = 3.16227766e-8
    const a = firstOnset([
      [1e-7, true],
      [1e-9, false],
      [1e-8, false],
      [1e-6, true],
    ]);
    expect(Math.abs(a! - 10 ** -7.5)).toBeLessThan(REL * 10 ** -7.5);
    expect(
      firstOnset([
        [1e-9, false],
        [1e-8, false],
      ]),
    ).toBeNull();
    expect(
      firstOnset([
        [1e-9, true],
        [1e-8, true],
      ]),
    ).toBe(1e-9); // at or below the grid: its first amplitude
    expect(
      firstOnset([
        [0, false],
        [2e-9, true],
      ]),
    ).toBe(1e-9); // log undefined at 0: arithmetic mean
  });

  it('takes the median of an odd and an even count', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([])).toBeNull();
  });

  it('builds metrics, classes, onset, decoupling boundary and the critical curve on a 4 x 2 amplitude-frequency grid', () => {
    const A = [1e-9, 1e-8, 1e-7, 1e-6];
    const F = [1e3, 1e5];
    const axes: MapAxis[] = [
      { key: 'drive.amplitude', values: A, scale: 'log' },
      { key: 'drive.frequency', values: F, scale: 'log' },
    ];
    // Column f = 1 kHz: modulated, hopping, hopping, decoupled. Column f = 100 kHz: modulated, modulated, decoupled, decoupled.
    const plan: [RunClass, number][] = [
      ['modulated', 0],
      ['modulated', 0],
      ['hopping', 3],
      ['modulated', 0],
      ['hopping', 2],
      ['decoupled', 0],
      ['decoupled', 0],
      ['decoupled', 0],
    ];
    const vcs = [1.0, 1.2, 1.4, 1.6, 1.1, 1.3, 1.5]; // point 7 failed; median of these 7 = 1.3
    const records: PointRecord[] = plan
      .slice(0, 7)
      .map(([c, h], i) =>
        okPoint(i, { 'drive.amplitude': A[i >> 1], 'drive.frequency': F[i & 1] }, c, h, vcs[i]),
      );
    records.push({ index: 7, axes: {}, summary: failedPointSummary('diverged'), wall_s: 0 });
    const m = buildSweepMap({ name: 't', scenario_sha256: 'x', axes, records, scenario: null });
    expect(m.total_points).toBe(8);
    expect(m.finished_points).toBe(8);
    expect(m.failed_points).toBe(1);
    expect(m.metrics.enhancement).toEqual([10, 11, 12, 13, 14, 15, 16, null]);
    expect(m.classes[7]).toBe('numerical-failure');
    expect(m.class_reasons[7]).toBe('diverged');
    // Onset: 1 kHz between 1 nm (clear) and 10 nm (hops): sqrt(1e-9 * 1e-8); 100 kHz: no hops anywhere.
    expect(m.onset_curve![0].frequency_Hz).toBe(1e3);
    expect(Math.abs(m.onset_curve![0].amplitude_m! - Math.sqrt(1e-17))).toBeLessThan(REL * Math.sqrt(1e-17));
    expect(m.onset_curve![1].amplitude_m).toBeNull();
    // Decoupling: 1 kHz between 100 nm and 1 um; 100 kHz between 10 nm and 100 nm (point 7 failed, so not counted).
    expect(Math.abs(m.decoupling_boundary![0].amplitude_m! - Math.sqrt(1e-13))).toBeLessThan(
      REL * Math.sqrt(1e-13),
    );
    expect(Math.abs(m.decoupling_boundary![1].amplitude_m! - Math.sqrt(1e-15))).toBeLessThan(
      REL * Math.sqrt(1e-15),
    );
    // Critical curve: A = v_c / (2 pi f) with v_c = 1.3 m/s.
    expect(Math.abs(m.critical_curve![0].amplitude_m! - 1.3 / (2 * Math.PI * 1e3))).toBeLessThan(REL * 2e-4);
    expect(Math.abs(m.critical_curve![1].amplitude_m! - 1.3 / (2 * Math.PI * 1e5))).toBeLessThan(REL * 2e-6);
    expect(m.amplitude_key).toBe('drive.amplitude');
    expect(m.recommended_reason).toBe('not computed');
  });

  it('leaves unfinished points null and draws no onset when a third axis has several values', () => {
    const axes: MapAxis[] = [
      { key: 'laser.gain.pump_ratio', values: [1.5, 2], scale: 'linear' },
      { key: 'drive.amplitude', values: [1e-9, 1e-8], scale: 'log' },
      { key: 'drive.frequency', values: [1e3], scale: 'log' },
    ];
    const records = [okPoint(1, {}, 'hopping', 1, 2)];
    const m = buildSweepMap({ name: 't', scenario_sha256: 'x', axes, records, scenario: null });
    expect(m.classes).toEqual([null, 'hopping', null, null]);
    expect(m.metrics.hops_per_period).toEqual([null, 1, null, null]);
    expect(m.onset_curve).toBeNull();
    expect(m.critical_curve![0].amplitude_m).toBeCloseTo(2 / (2 * Math.PI * 1e3), 15);
  });

  it('has no curves without both drive axes', () => {
    const m = buildSweepMap({
      name: 't',
      scenario_sha256: 'x',
      axes: [{ key: 'drive.amplitude', values: [1e-9], scale: 'linear' }],
      records: [],
      scenario: null,
    });
    expect(m.onset_curve).toBeNull();
    expect(m.critical_curve).toBeNull();
    expect(m.amplitude_key).toBeNull();
  });
});
