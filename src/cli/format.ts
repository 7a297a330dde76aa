/**
 * Plain-text output for the terminal: aligned tables and numbers with SI prefixes.
 * Colour (bold headings only) is used on a terminal and never when NO_COLOR is set
 * (https://no-color.org) or the output is piped, so scripts and logs get clean text.
 */
import { formatSI } from '../scenario/units';
import type { SweepMap } from '../results/map';

/** True if text written to `stream` may carry ANSI styling: a TTY and NO_COLOR unset or empty. */
export function colourAllowed(
  stream: { isTTY?: boolean } = process.stdout,
  env: NodeJS.ProcessEnv = process.env,
): boolean {
  if (env.NO_COLOR !== undefined && env.NO_COLOR !== '') return false;
  return stream.isTTY === true;
}

/** `text` in bold when colour is allowed, else unchanged. */
export function bold(text: string, colour: boolean): string {
  return colour ? `\u001b[1m${text}\u001b[22m` : text;
}

export type Align = 'left' | 'right';

export interface TableOptions {
  /** column titles, printed above a dashed rule */
  header?: string[];
  /** per-column alignment; default left */
  align?: Align[];
  /** bold header when true */
  colour?: boolean;
  /** text before every line (indentation) */
  indent?: string;
}

/**
 * The rows as aligned columns separated by two spaces, one line per row, no trailing
 * spaces. Rows may be ragged (missing cells are empty). Width is counted in UTF-16 units,
 * which is right for the ASCII and Latin text this tool prints.
 */
export function formatTable(rows: readonly (readonly string[])[], opts: TableOptions = {}): string {
  const all = opts.header ? [opts.header, ...rows] : [...rows];
  const ncol = Math.max(0, ...all.map((r) => r.length));
  const widths = new Array<number>(ncol).fill(0);
  for (const r of all) for (let c = 0; c < ncol; c++) widths[c] = Math.max(widths[c], (r[c] ?? '').length);
  const indent = opts.indent ?? '';
  const line = (r: readonly string[]) =>
    (
      indent +
      widths
        .map((w, c) => {
          const cell = r[c] ?? '';
          return (opts.align?.[c] ?? 'left') === 'right' ? cell.padStart(w) : cell.padEnd(w);
        })
        .join('  ')
    ).replace(/\s+$/, '');
  const out: string[] = [];
  if (opts.header) {
    out.push(bold(line(opts.header), opts.colour === true));
    out.push(indent + widths.map((w) => '-'.repeat(w)).join('  '));
  }
  for (const r of rows) out.push(line(r));
  return out.join('\n');
}

/**
 * A value with its unit and an SI prefix ("681.4 MHz"); "n/a" for null, undefined or NaN,
 * "infinite" for an infinite value. `digits` significant digits.
 */
export function formatQuantity(value: number | null | undefined, unit: string, digits = 4): string {
  if (value === null || value === undefined || Number.isNaN(value)) return 'n/a';
  if (!Number.isFinite(value)) return value > 0 ? 'infinite' : '-infinite';
  return formatSI(value, unit, digits);
}

/** A dimensionless number to `digits` significant digits, plain or in e-notation when tiny or huge. */
export function formatNumber(value: number | null | undefined, digits = 4): string {
  if (value === null || value === undefined || Number.isNaN(value)) return 'n/a';
  if (!Number.isFinite(value)) return value > 0 ? 'infinite' : '-infinite';
  const a = Math.abs(value);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return value.toExponential(digits - 1);
  return String(Number(value.toPrecision(digits)));
}

/**
 * The terminal line for a map's recommended operating point (docs/model.md §5): where it
 * is and why, or why there is none; null for a map without both drive axes, which has no
 * operating point to speak of.
 */
export function recommendedPointLine(
  map: Pick<SweepMap, 'recommended' | 'recommended_reason' | 'amplitude_key' | 'frequency_key'>,
): string | null {
  if (map.amplitude_key === null || map.frequency_key === null) return null;
  return map.recommended !== null
    ? `recommended operating point: ${map.recommended.reason}`
    : `no recommended operating point: ${map.recommended_reason.replace(/^no operating point: /, '')}`;
}
