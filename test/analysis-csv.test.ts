import { describe, expect, it } from 'vitest';
import { mapToCsv, spectraSetToCsv, traceSetToCsv } from '../src/analysis';
import type { SweepMap } from '../src/results/map';
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

  it('spectra: long format, one row per bin, so spectra of different lengths never share a row', () => {
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
    expect(rows[0]).toEqual(['spectrum', 'mode', 'frequency (Hz)', 'value', 'unit']);
    // 3 RIN bins + 4 optical bins + 2 harmonics, plus the header
    expect(rows.length).toBe(1 + 3 + 4 + 2);
    expect(rows[2]).toEqual(['rin', '', '20', '-125.5', 'dB/Hz']);
    expect(rows[7]).toEqual(['optical', '2', '10', '-60', 'dB']);
    expect(rows[9]).toEqual(['drive harmonic', '', '280000', '', '']);
    const noRin = parse(spectraSetToCsv({ ...ss, rin: null, optical: [] }));
    expect(noRin.map((r) => r[0])).toEqual(['spectrum', 'drive harmonic', 'drive harmonic']);
  });

  it('map: one row per point in index order, axes with units, computed or not, metrics with their standard errors', () => {
    const map = {
      version: 1,
      name: 'csv',
      scenario_sha256: '0',
      axes: [
        { key: 'drive.amplitude', values: [1e-7, 2e-7], scale: 'linear' as const },
        { key: 'drive.frequency', values: [1e3, 2e3, 3e3], scale: 'linear' as const },
      ],
      total_points: 6,
      finished_points: 5,
      failed_points: 0,
      metrics: {
        external_mean_W: [0.1, 0.2, 0.3, 0.4, 0.5, null],
        external_mean_stderr_W: [0.01, 0.02, 0.03, 0.04, 0.05, null],
        ripple_rel: [0.5, 0.4, 0.3, 0.2, 0.1, null],
      },
      classes: ['hopping', 'hopping', 'decoupled', 'no-gain', 'decoupled', null],
      class_reasons: ['a, b', 'r', 'r', 'r', 'r', null],
      amplitude_key: null,
      frequency_key: null,
      onset_curve: null,
      decoupling_boundary: null,
      critical_curve: null,
      reachable: [true, true, true, false, false, false],
      recommended: null,
      recommended_reason: '',
      inferred: [false, false, false, false, true, false],
    } as SweepMap & { inferred: boolean[] };
    const rows = parse(mapToCsv(map, (k) => (k === 'drive.amplitude' ? 'm' : 'Hz')));
    expect(rows[0]).toEqual([
      'index',
      'drive.amplitude (m)',
      'drive.frequency (Hz)',
      'computed',
      'class',
      'external_mean_W',
      'external_mean_stderr_W',
      'ripple_rel',
      'reachable',
      'class reason',
    ]);
    expect(rows.length).toBe(7);
    // index 4 = second amplitude (row-major, last axis fastest), second frequency
    expect(rows[5]).toEqual(['4', '2e-7', '2000', 'inferred', 'decoupled', '0.5', '0.05', '0.1', 'no', 'r']);
    expect(rows[1]).toEqual([
      '0',
      '1e-7',
      '1000',
      'computed',
      'hopping',
      '0.1',
      '0.01',
      '0.5',
      'yes',
      'a, b',
    ]);
    expect(rows[6]).toEqual(['5', '2e-7', '3000', 'not run', '', '', '', '', 'no', '']);
  });
});
