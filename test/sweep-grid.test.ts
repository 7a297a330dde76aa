/**
 * Grid expansion of `sweep.axes`: values in SI from numbers and unit strings, row-major
 * numbering (last axis fastest), point scenarios as validated copies without `sweep`.
 * Expected values are worked by hand beside each check.
 */
import { describe, expect, it } from 'vitest';
import { scenarioSchema } from '../src/scenario/schema';
import type { Scenario } from '../src/scenario/schema';
import { InputError } from '../src/scenario/errors';
import { expandGrid, gridPoint, pointScenario, rangeValues } from '../src/sweep/grid';
import { axisIndices, axisStrides, pointCount } from '../src/results/grid-index';

const laser = {
  wavelength: '632.8 nm',
  cavity_length: '22 cm',
  rear_mirror: { reflectivity: 0.999, radius: '1 m' },
  output_coupler: { reflectivity: 0.99, radius: 'flat' },
  gain: { linewidth: '1.5 GHz', pump_ratio: 1.8, saturation_power: '0.3 W', inversion_lifetime: '20 ns' },
};
const external = { length: '9 cm', return_mirror: { reflectivity: 0.9995, radius: '10 cm' } };

function scenario(axes: unknown[]): Scenario {
  return scenarioSchema.parse({
    name: 'grid-test',
    laser,
    external,
    drive: { amplitude: '80 nm', frequency: '140 kHz' },
    sweep: { axes },
  });
}

// Floating-point exp/log round trips lose a few ulps; 1e-12 relative is far above that and far below any meaningful difference.
const REL = 1e-12;
function expectClose(actual: number[], expected: number[]) {
  expect(actual.length).toBe(expected.length);
  actual.forEach((v, i) =>
    expect(Math.abs(v - expected[i])).toBeLessThanOrEqual(REL * Math.abs(expected[i])),
  );
}

describe('sweep grid', () => {
  it('a linear axis of 5 points from 1 nm to 5 nm is 1, 2, 3, 4, 5 nm (hand-computed step 1 nm)', () => {
    const g = expandGrid(scenario([{ key: 'drive.amplitude', from: '1 nm', to: '5 nm', points: 5 }]));
    expectClose(g.axes[0].values, [1e-9, 2e-9, 3e-9, 4e-9, 5e-9]);
    expect(g.axes[0].scale).toBe('linear');
    expect(g.total).toBe(5);
  });

  it('a log axis of 3 points from 10 nm to 1 um is 10 nm, 100 nm, 1 um (one decade per step), end points exact', () => {
    const g = expandGrid(
      scenario([{ key: 'drive.amplitude', from: '10 nm', to: '1 um', points: 3, scale: 'log' }]),
    );
    expectClose(g.axes[0].values, [1e-8, 1e-7, 1e-6]);
    expect(g.axes[0].values[0]).toBe(1e-8);
    expect(g.axes[0].values[2]).toBe(1e-6);
    expect(g.axes[0].scale).toBe('log');
  });

  it('explicit values mix unit strings and SI numbers: 140 kHz and 2e5 give 1.4e5 and 2e5 Hz', () => {
    const g = expandGrid(scenario([{ key: 'drive.frequency', values: ['140 kHz', 2e5] }]));
    expect(g.axes[0].values).toEqual([1.4e5, 2e5]);
  });

  it('a single-point range is its from value', () => {
    expect(rangeValues(3, 7, 1, 'linear')).toEqual([3]);
  });

  it('numbers points row-major, the last axis fastest (3 x 2 grid: index = 2 i_A + i_F)', () => {
    const g = expandGrid(
      scenario([
        { key: 'drive.amplitude', values: ['1 nm', '2 nm', '3 nm'] },
        { key: 'drive.frequency', values: ['1 kHz', '2 kHz'] },
      ]),
    );
    expect(g.total).toBe(6);
    const seen = [0, 1, 2, 3, 4, 5].map((i) => axisIndices(g.axes, i));
    expect(seen).toEqual([
      [0, 0],
      [0, 1],
      [1, 0],
      [1, 1],
      [2, 0],
      [2, 1],
    ]);
    const p5 = gridPoint(g, 5).axes;
    expect(p5['drive.amplitude']).toBeCloseTo(3e-9, 20);
    expect(p5['drive.frequency']).toBe(2000);
    expect(() => axisIndices(g.axes, 6)).toThrow(RangeError);
  });

  it('strides and indices agree: index = sum_k i_k stride_k over a 3 x 4 x 2 grid, each index once', () => {
    // Row-major order by its definition (last axis fastest): stride_k = n_{k+1} ... n_{last}.
    const axes = [{ values: [0, 0, 0] }, { values: [0, 0, 0, 0] }, { values: [0, 0] }];
    expect(pointCount(axes)).toBe(24);
    expect(axisStrides(axes)).toEqual([8, 2, 1]);
    const seen = new Set<string>();
    for (let i = 0; i < 24; i++) {
      const idx = axisIndices(axes, i);
      expect(idx[0] * 8 + idx[1] * 2 + idx[2]).toBe(i);
      idx.forEach((v, k) => expect(v).toBeLessThan(axes[k].values.length));
      seen.add(idx.join(','));
    }
    expect(seen.size).toBe(24);
  });

  it("a point's scenario is a validated copy with the axis values set and no sweep; the base is not changed", () => {
    const s = scenario([
      { key: 'drive.amplitude', values: ['1 nm', '2 nm'] },
      { key: 'laser.gain.pump_ratio', values: [1.5, 2.5] },
    ]);
    const g = expandGrid(s);
    const p = pointScenario(g, 3);
    expect(p.sweep).toBeUndefined();
    expect(p.drive.amplitude).toBeCloseTo(2e-9, 20);
    expect(p.laser.gain.pump_ratio).toBe(2.5);
    expect(p.drive.frequency).toBe(140e3);
    expect(s.drive.amplitude).toBeCloseTo(80e-9, 20);
    expect(s.laser.gain.pump_ratio).toBe(1.8);
    expect(s.sweep).toBeDefined();
  });

  it('refuses an unknown key with its key path and the nearest valid key', () => {
    try {
      expandGrid(scenario([{ key: 'drive.amplitud', values: [1e-9] }]), 'grid.yaml');
      throw new Error('no error');
    } catch (err) {
      expect(err).toBeInstanceOf(InputError);
      const e = err as InputError;
      expect(e.file).toBe('grid.yaml');
      expect(e.problems[0].path).toBe('sweep.axes[0].key');
      expect(e.message).toContain("did you mean 'drive.amplitude'");
    }
  });

  it('refuses a value of the wrong kind (a frequency for a length), naming sweep.axes[0].from', () => {
    try {
      expandGrid(scenario([{ key: 'drive.amplitude', from: '3 kHz', to: '1 um', points: 3 }]), 'grid.yaml');
      throw new Error('no error');
    } catch (err) {
      expect(err).toBeInstanceOf(InputError);
      expect((err as InputError).problems[0].path).toBe('sweep.axes[0].from');
      expect((err as InputError).message).toContain('unit of another kind');
    }
  });

  it('refuses a log axis through zero and a key given twice', () => {
    expect(() =>
      expandGrid(scenario([{ key: 'drive.offset', from: 0, to: '1 nm', points: 3, scale: 'log' }])),
    ).toThrow(/log axis/);
    expect(() =>
      expandGrid(
        scenario([
          { key: 'drive.amplitude', values: [1e-9] },
          { key: 'drive.amplitude', values: [2e-9] },
        ]),
      ),
    ).toThrow(/again/);
  });
});
