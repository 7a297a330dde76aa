import { describe, expect, it } from 'vitest';
import { spectraSetToCsv, traceSetToCsv } from '../src/analysis';
import type { SpectraSet, TraceSet } from '../src/results/artifacts';

// Layout per RFC 4180 (Y. Shafranovich, 2005): comma separator, CRLF, quoted cells with
// doubled quotes; the values must read back exactly (shortest round-trip number form).
function parse(csv: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let cell = '';
  let q = false;
  for (let i = 0; i < csv.length; i++) {
    const c = csv[i];
    if (q) {
      if (c === '"' && csv[i + 1] === '"') {
        cell += '"';
        i++;
      } else if (c === '"') q = false;
      else cell += c;
    } else if (c === '"') q = true;
    else if (c === ',') {
      row.push(cell);
      cell = '';
    } else if (c === '\r' && csv[i + 1] === '\n') {
      row.push(cell);
      rows.push(row);
      row = [];
      cell = '';
      i++;
    } else cell += c;
  }
  return rows;
}

describe('CSV of traces and spectra', () => {
  it('traces: header with units, one column per series, values read back exactly', () => {
    const ts: TraceSet = {
      t_s: [0, 1e-9, 2.5e-9],
      series: [
        { key: 'p_ext', label: 'gap power, mode sum', unit: 'W', values: [0.1, 1 / 3, NaN] },
        { key: 'p_out', label: 'laser "output"', unit: 'W', values: [1e-3, 2e-3, 3e-3] },
      ],
      drive_period_s: 7e-6,
    };
    const rows = parse(traceSetToCsv(ts));
    expect(rows[0]).toEqual(['time (s)', 'gap power, mode sum (W)', 'laser "output" (W)']);
    expect(rows.length).toBe(4);
    expect(Number(rows[2][0])).toBe(1e-9);
    expect(Number(rows[2][1])).toBe(1 / 3);
    expect(rows[3][1]).toBe(''); // NaN is an empty cell
    expect(traceSetToCsv(ts).split('\r\n')[0]).toBe(
      'time (s),"gap power, mode sum (W)","laser ""output"" (W)"',
    );
  });

  it('spectra: column pairs per spectrum, shorter columns padded with empty cells', () => {
    const ss: SpectraSet = {
      rin: {
        f_Hz: [10, 20, 30],
        values: [-120, -125.5, -130],
        unit: 'dB/Hz',
        resolution_Hz: 10,
        segments: 8,
      },
      optical: [{ f_Hz: [-5, 0, 5, 10], values: [-40, 0, -20, -60], mode: 2, unit: 'dB' }],
      drive_harmonics_Hz: [140e3, 280e3],
    };
    const rows = parse(spectraSetToCsv(ss));
    expect(rows[0]).toEqual([
      'RIN frequency (Hz)',
      'RIN (dB/Hz)',
      'mode 2 optical offset (Hz)',
      'mode 2 optical (dB)',
      'drive harmonic (Hz)',
    ]);
    expect(rows.length).toBe(5);
    expect(rows[4]).toEqual(['', '', '10', '-60', '']);
    expect(rows[2]).toEqual(['20', '-125.5', '0', '0', '280000']);
    const noRin = parse(spectraSetToCsv({ ...ss, rin: null, optical: [] }));
    expect(noRin[0]).toEqual(['drive harmonic (Hz)']);
  });
});
