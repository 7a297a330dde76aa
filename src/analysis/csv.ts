/**
 * CSV text of the decimated traces, the spectra (RUN_FILES.tracesCsv, .spectraCsv) and a
 * sweep map (map.csv), for spreadsheets and scripts. RFC 4180 layout: comma-separated, CRLF line ends, cells
 * with a comma, quote or line break quoted with doubled quotes. One header row names each
 * column with its unit in parentheses; one column per series. Numbers use JavaScript's
 * shortest round-trip form; NaN, infinities and missing cells (series of unequal length)
 * are empty cells. Reference: Y. Shafranovich, RFC 4180 (2005).
 */
import type { SpectraSet, TraceSet } from '../results/artifacts';
import type { SweepMap } from '../results/map';

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
 * CSV of a SpectraSet in long format, one row per bin, so spectra of different axes and
 * lengths never stand side by side: "spectrum" (rin, optical, drive harmonic), "mode"
 * (the laser mode of an optical spectrum, else empty), "frequency (Hz)" (for an optical
 * spectrum the offset from the mode), "value" and "unit" (dB/Hz, dB; empty for a drive
 * harmonic, which is a frequency only).
 */
export function spectraSetToCsv(spectra: SpectraSet): string {
  const lines: string[] = [['spectrum', 'mode', 'frequency (Hz)', 'value', 'unit'].join(',')];
  if (spectra.rin !== null)
    for (let i = 0; i < spectra.rin.f_Hz.length; i++)
      lines.push(
        ['rin', '', num(spectra.rin.f_Hz[i]), num(spectra.rin.values[i]), cell(spectra.rin.unit)].join(','),
      );
  for (const o of spectra.optical)
    for (let i = 0; i < o.f_Hz.length; i++)
      lines.push(['optical', String(o.mode), num(o.f_Hz[i]), num(o.values[i]), cell(o.unit)].join(','));
  for (const f of spectra.drive_harmonics_Hz) lines.push(['drive harmonic', '', num(f), '', ''].join(','));
  return lines.join('\r\n') + '\r\n';
}

/**
 * CSV of a sweep map (map.csv), one row per grid point in index order: "index", one column
 * per axis headed "key (unit)", "computed" (computed, inferred when the map marks the point
 * as inferred, or not run), "class", one column per metric headed by its key (the unit is
 * the key's suffix: _W watts, _m_s m/s, _rel and bare names dimensionless), each followed
 * by its standard error when the map holds one (`<metric>` with _stderr before the unit),
 * "reachable" (yes/no, when the map has an actuator mask) and "class reason". Values SI.
 * `unitOf` gives the SI unit of an axis key ("" for none).
 */
export function mapToCsv(map: SweepMap, unitOf: (key: string) => string = () => ''): string {
  const st = new Array<number>(map.axes.length).fill(1);
  for (let k = map.axes.length - 2; k >= 0; k--) st[k] = st[k + 1] * map.axes[k + 1].values.length;
  const names = Object.keys(map.metrics ?? {});
  const stderrName = (n: string) => {
    const m = /^(.*?)(_W|_m|_s|_Hz|_per_s|_m_s)$/.exec(n);
    return m ? `${m[1]}_stderr${m[2]}` : `${n}_stderr`;
  };
  const plain = names.filter((n) => !n.includes('_stderr'));
  const cols: string[] = [];
  for (const n of plain) {
    cols.push(n);
    if (names.includes(stderrName(n))) cols.push(stderrName(n));
  }
  // any standard error whose metric is missing still gets its column
  for (const n of names) if (!cols.includes(n)) cols.push(n);
  const inferred = (map as { inferred?: unknown }).inferred;
  const reach = Array.isArray(map.reachable) ? map.reachable : null;
  const header = [
    'index',
    ...map.axes.map((a) => (unitOf(a.key) ? `${a.key} (${unitOf(a.key)})` : a.key)),
    'computed',
    'class',
    ...cols,
    ...(reach ? ['reachable'] : []),
    'class reason',
  ];
  const lines = [header.map(cell).join(',')];
  for (let i = 0; i < map.total_points; i++) {
    const cls = map.classes[i] ?? null;
    const computed =
      Array.isArray(inferred) && inferred[i] === true ? 'inferred' : cls !== null ? 'computed' : 'not run';
    const row = [
      String(i),
      ...map.axes.map((a, k) => num(a.values[Math.floor(i / st[k]) % a.values.length])),
      computed,
      cell(cls ?? ''),
      ...cols.map((n) => {
        const v = map.metrics[n]?.[i];
        return typeof v === 'number' ? num(v) : '';
      }),
      ...(reach ? [reach[i] ? 'yes' : 'no'] : []),
      cell(map.class_reasons?.[i] ?? ''),
    ];
    lines.push(row.join(','));
  }
  return lines.join('\r\n') + '\r\n';
}
