/**
 * CSV text of the decimated traces and the spectra (RUN_FILES.tracesCsv, .spectraCsv),
 * for spreadsheets and scripts. RFC 4180 layout: comma-separated, CRLF line ends, cells
 * with a comma, quote or line break quoted with doubled quotes. One header row names each
 * column with its unit in parentheses; one column per series. Numbers use JavaScript's
 * shortest round-trip form; NaN, infinities and missing cells (series of unequal length)
 * are empty cells. Reference: Y. Shafranovich, RFC 4180 (2005).
 */
import type { SpectraSet, TraceSet } from '../results/artifacts';

function cell(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function num(x: number | undefined): string {
  return x !== undefined && Number.isFinite(x) ? String(x) : '';
}

function table(header: string[], columns: ArrayLike<number>[]): string {
  let rows = 0;
  for (const c of columns) if (c.length > rows) rows = c.length;
  const lines: string[] = [header.map(cell).join(',')];
  for (let i = 0; i < rows; i++) {
    const parts: string[] = new Array<string>(columns.length);
    for (let c = 0; c < columns.length; c++)
      parts[c] = num(i < columns[c].length ? columns[c][i] : undefined);
    lines.push(parts.join(','));
  }
  return lines.join('\r\n') + '\r\n';
}

/** CSV of a TraceSet: "time (s)" then one column per series, headed "label (unit)". */
export function traceSetToCsv(traces: TraceSet): string {
  const header = ['time (s)', ...traces.series.map((s) => `${s.label} (${s.unit})`)];
  return table(header, [traces.t_s, ...traces.series.map((s) => s.values)]);
}

/**
 * CSV of a SpectraSet: pairs of columns per spectrum ("RIN frequency (Hz)", "RIN (dB/Hz)";
 * "mode M optical offset (Hz)", "mode M optical (dB)" for each optical spectrum), then
 * "drive harmonic (Hz)". Spectra have different axes and lengths; shorter columns end in
 * empty cells.
 */
export function spectraSetToCsv(spectra: SpectraSet): string {
  const header: string[] = [];
  const cols: ArrayLike<number>[] = [];
  if (spectra.rin !== null) {
    header.push('RIN frequency (Hz)', `RIN (${spectra.rin.unit})`);
    cols.push(spectra.rin.f_Hz, spectra.rin.values);
  }
  for (const o of spectra.optical) {
    header.push(`mode ${o.mode} optical offset (Hz)`, `mode ${o.mode} optical (${o.unit})`);
    cols.push(o.f_Hz, o.values);
  }
  header.push('drive harmonic (Hz)');
  cols.push(spectra.drive_harmonics_Hz);
  return table(header, cols);
}
