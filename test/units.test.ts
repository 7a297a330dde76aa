/**
 * Quantity parsing at the scenario edge: every kind the format accepts reads back what
 * formatSI writes, and a unit of the wrong kind is refused, never converted.
 */
import { describe, expect, it } from 'vitest';
import { formatSI, parseQuantity, QUANTITY_KINDS, QuantityKind } from '../src/scenario/units';

// Values spread over the SI prefixes femto..tera (SI Brochure, BIPM, 9th ed. 2019, Table 7).
const VALUES = [3.3e-15, 2.5e-12, 4.2e-9, 7e-6, 1.5e-3, 0.3, 42, 6.8e3, 1.25e6, 3.3e9, 4.7e12, -2.2e-7];

const dimensioned = (Object.entries(QUANTITY_KINDS) as [QuantityKind, string][]).filter(([, u]) => u !== '');

describe('quantity parsing', () => {
  for (const [kind, unit] of dimensioned) {
    it(`${kind}: formatSI output parses back to the same SI value (unit ${unit})`, () => {
      for (const v of VALUES) {
        const text = formatSI(v, unit);
        const parsed = parseQuantity(text, kind);
        expect(parsed.ok, `${text} as ${kind}`).toBe(true);
        // formatSI keeps 4 significant digits and every value above has at most 3,
        // so the only error left is floating-point rounding of the prefix scale.
        if (parsed.ok) expect(Math.abs(parsed.value / v - 1)).toBeLessThan(1e-12);
      }
    });
  }

  it('known conversions of the contract examples land on SI values', () => {
    // prefixes from the SI Brochure (BIPM, 9th ed. 2019, Table 7); 1 g = 1e-3 kg by definition of the prefix
    const cases: [string, QuantityKind, number][] = [
      ['22 cm', 'length', 0.22],
      ['632.8 nm', 'length', 632.8e-9],
      ['1.5 GHz', 'frequency', 1.5e9],
      ['140 kHz', 'frequency', 140e3],
      ['0.3 W', 'power', 0.3],
      ['20 ns', 'time', 20e-9],
      ['10 nm/V', 'stroke_per_volt', 10e-9],
      ['50 nF', 'capacitance', 50e-9],
      ['2 g', 'mass', 2e-3],
      ['1 us', 'time', 1e-6],
      ['1 µs', 'time', 1e-6],
      ['5 mA', 'current', 5e-3],
      ['150 V', 'voltage', 150],
      ['0.3 m/s', 'speed', 0.3],
    ];
    for (const [text, kind, si] of cases) {
      const p = parseQuantity(text, kind);
      expect(p.ok, text).toBe(true);
      if (p.ok) expect(Math.abs(p.value / si - 1), text).toBeLessThan(1e-12); // rounding only
    }
    // 180 degrees is pi radians (definition of the degree, SI Brochure Table 8)
    const deg = parseQuantity('180 deg', 'angle');
    expect(deg.ok && Math.abs(deg.value - Math.PI) < 1e-12).toBe(true);
  });

  it('plain numbers and numeric strings are taken as SI', () => {
    expect(parseQuantity(0.22, 'length')).toEqual({ ok: true, value: 0.22 });
    expect(parseQuantity('1e-9', 'power')).toEqual({ ok: true, value: 1e-9 });
    expect(parseQuantity(1.8, 'dimensionless')).toEqual({ ok: true, value: 1.8 });
  });

  it('a unit of another kind is refused for every kind, naming what was expected', () => {
    // one foreign unit per kind, each of a different dimension from the kind's SI unit
    const foreign: Record<string, string> = {
      length: '22 kHz',
      time: '3 m',
      frequency: '20 ns',
      power: '5 V',
      voltage: '2 W',
      current: '50 nF',
      capacitance: '5 mA',
      mass: '10 nm/V',
      speed: '1 Hz',
      stroke_per_volt: '10 nm',
      stiffness: '2 N',
      force: '5 N/m',
      angle: '1 s',
      tilt_per_stroke: '1 s',
    };
    for (const [kind] of dimensioned) {
      const p = parseQuantity(foreign[kind], kind);
      expect(p.ok, `${foreign[kind]} as ${kind}`).toBe(false);
      if (!p.ok) {
        expect(p.message).toMatch(/^expected /);
        expect(p.message).toContain('unit of another kind');
      }
    }
    const p = parseQuantity('3 m', 'dimensionless');
    expect(p.ok).toBe(false);
  });

  it('garbage, empty strings, non-finite numbers and wrong types are refused', () => {
    for (const bad of ['banana', '', '  ', Infinity, NaN, true, [1], { a: 1 }]) {
      const p = parseQuantity(bad, 'length');
      expect(p.ok, String(bad)).toBe(false);
      if (!p.ok) expect(p.message).toMatch(/^expected a length .*, found /);
    }
  });
});
