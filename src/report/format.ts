/**
 * Number formatting for reports. A value the engine did not compute (null, undefined,
 * or a non-finite number) is shown as "not computed", never as 0.
 */
import { formatSI } from '../scenario/units';

export const NOT_COMPUTED = 'not computed';

/** True when v is a finite number (the only kind of value worth printing as a number). */
export function isNum(v: unknown): v is number {
  return typeof v === 'number' && Number.isFinite(v);
}

/** SI value with engineering prefix (formatSI), or "not computed". */
export function fmtSI(v: unknown, unit: string, digits = 4): string {
  if (!isNum(v)) return NOT_COMPUTED;
  if (unit === '/s') return `${fmtNum(v, digits)} /s`;
  // a prefix goes on the gram, not the kilogram: 2e-5 kg is 20 mg, never "20 ukg"
  if (unit === 'kg') return fmtSI(v * 1e3, 'g', digits);
  // formatSI writes the micro prefix as "u"; the page can show the proper sign.
  return formatSI(v, unit, digits).replace(/ u(?=\S)/, ' \u00b5');
}

/**
 * A position that is zero up to floating-point round-off (|v| below 1e-12 of the
 * `scale` it was computed from, e.g. a waist position of 2.8e-17 m in a 5 cm gap) as 0.
 */
export function snapRoundOff(v: unknown, scale: number): unknown {
  return isNum(v) && Math.abs(v) < 1e-12 * Math.abs(scale) ? 0 : v;
}

/** Plain number with `digits` significant digits (exponent form outside 1e-3..1e6), or "not computed". */
export function fmtNum(v: unknown, digits = 4): string {
  if (!isNum(v)) return NOT_COMPUTED;
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-3) return v.toExponential(digits - 1).replace(/\.?0+e/, 'e');
  return String(Number(v.toPrecision(digits)));
}

/** A dimensionless fraction as a percentage ("4.2 %"), or "not computed". */
export function fmtPercent(v: unknown, digits = 3): string {
  return isNum(v) ? `${fmtNum(v * 100, digits)} %` : NOT_COMPUTED;
}

/** A ratio as "3.2x", or "not computed". */
export function fmtRatio(v: unknown, digits = 3): string {
  return isNum(v) ? `${fmtNum(v, digits)}x` : NOT_COMPUTED;
}

/** Unit suffixes of result keys (CONTRACT.md: snake_case with the unit last), longest first. */
const KEY_UNITS: [string, string][] = [
  ['_per_W_m2', 'W/m²/W'],
  ['_m_s2', 'm/s²'],
  ['_m_s', 'm/s'],
  ['_per_s', '/s'],
  ['_m2', 'm²'],
  ['_Hz', 'Hz'],
  ['_W', 'W'],
  ['_m', 'm'],
  ['_s', 's'],
  ['_V', 'V'],
  ['_A', 'A'],
  ['_F', 'F'],
  ['_J', 'J'],
];

/**
 * The SI unit a result key carries by the naming rule (`fsr_laser_Hz` -> "Hz",
 * `peak_speed_m_s` -> "m/s"); "" for dimensionless keys, "%" for `_rel` keys.
 */
export function unitOfKey(key: string): string {
  if (key.endsWith('_rel')) return '%';
  for (const [suffix, unit] of KEY_UNITS) if (key.endsWith(suffix)) return unit;
  return '';
}

/** Format a result value by its key's unit suffix (see unitOfKey); strings and booleans as text. */
export function fmtByKey(key: string, v: unknown): string {
  if (v === null || v === undefined) return NOT_COMPUTED;
  if (typeof v === 'string') return v;
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v !== 'number') return JSON.stringify(v);
  const unit = unitOfKey(key);
  if (unit === '%') return fmtPercent(v);
  if (unit === '') return fmtNum(v);
  return fmtSI(v, unit);
}

/** Human label of a result key: unit suffix dropped, underscores to spaces ("fsr laser"). */
export function labelOfKey(key: string): string {
  let k = key;
  if (k.endsWith('_rel')) k = k.slice(0, -4) + ' (relative)';
  else
    for (const [suffix] of KEY_UNITS)
      if (k.endsWith(suffix)) {
        k = k.slice(0, -suffix.length);
        break;
      }
  return k.replace(/_/g, ' ');
}

/** Safe property access for summaries whose optional parts may be missing or null. */
export function get(obj: unknown, ...path: string[]): unknown {
  let v: unknown = obj;
  for (const p of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<string, unknown>)[p];
  }
  return v;
}
