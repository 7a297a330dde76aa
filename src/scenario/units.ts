/**
 * Quantity parsing at the edge: "22 cm", "1.5 GHz", "10 nm/V" -> SI numbers.
 *
 * The parsing itself is js-quantities (a maintained unit library); this module only
 * fixes which physical kinds the scenario format knows and the SI unit each one is
 * converted to, so that the rest of the code never sees a unit string.
 */
import Qty from 'js-quantities';

/** The physical kinds a scenario quantity may have, with the SI unit each converts to. */
export const QUANTITY_KINDS = {
  length: 'm',
  time: 's',
  frequency: 'Hz',
  power: 'W',
  voltage: 'V',
  current: 'A',
  capacitance: 'F',
  mass: 'kg',
  speed: 'm/s',
  stroke_per_volt: 'm/V',
  stiffness: 'N/m',
  force: 'N',
  angle: 'rad',
  tilt_per_stroke: 'rad/m',
  dimensionless: '',
} as const;

export type QuantityKind = keyof typeof QUANTITY_KINDS;

/** Result of parsing one quantity: a SI value, or a sentence saying what was wrong. */
export type ParsedQuantity = { ok: true; value: number } | { ok: false; message: string };

/** Human names of the SI units for messages ("a length such as '22 cm' or 0.22 (m)"). */
const EXAMPLES: Record<QuantityKind, string> = {
  length: "a length such as '22 cm' or 0.22 (metres)",
  time: "a time such as '20 ns' or 2e-8 (seconds)",
  frequency: "a frequency such as '140 kHz' or 140000 (hertz)",
  power: "a power such as '0.3 W' or 0.3 (watts)",
  voltage: "a voltage such as '100 V' or 100 (volts)",
  current: "a current such as '5 mA' or 0.005 (amperes)",
  capacitance: "a capacitance such as '50 nF' or 5e-8 (farads)",
  mass: "a mass such as '2 g' or 0.002 (kilograms)",
  speed: "a speed such as '0.3 m/s' or 0.3 (metres per second)",
  stroke_per_volt: "a stroke per volt such as '10 nm/V' or 1e-8 (metres per volt)",
  stiffness: "a stiffness such as '5 N/um' or 5e6 (newtons per metre)",
  force: "a force such as '2 N' or 2 (newtons)",
  angle: "an angle such as '90 deg' or 1.5708 (radians)",
  tilt_per_stroke: "a tilt per stroke such as '10 urad/um' or 10 (radians per metre)",
  dimensionless: 'a plain number',
};

/** Describe the expected form of a quantity of this kind, for error messages. */
export function describeKind(kind: QuantityKind): string {
  return EXAMPLES[kind];
}

/**
 * Parse a number (taken as SI) or a string with a unit into the SI value of the given kind.
 * A unit of the wrong kind ("22 kHz" for a length) is an error, never a silent conversion.
 */
export function parseQuantity(input: unknown, kind: QuantityKind): ParsedQuantity {
  if (typeof input === 'number') {
    if (!Number.isFinite(input))
      return { ok: false, message: `expected ${EXAMPLES[kind]}, found ${String(input)}` };
    return { ok: true, value: input };
  }
  if (typeof input !== 'string') {
    return { ok: false, message: `expected ${EXAMPLES[kind]}, found ${describeFound(input)}` };
  }
  const text = input.trim().replace(/µ/g, 'u').replace(/μ/g, 'u');
  if (text === '') return { ok: false, message: `expected ${EXAMPLES[kind]}, found an empty string` };
  let q: Qty;
  try {
    q = Qty.parse(text) ?? (null as unknown as Qty);
    if (q === null) throw new Error('unparsable');
  } catch {
    return {
      ok: false,
      message: `expected ${EXAMPLES[kind]}, found '${input}' (${unitFix(text, kind) ?? 'not a number with a known unit'})`,
    };
  }
  const si = QUANTITY_KINDS[kind];
  if (q.isUnitless()) {
    // A bare number in a string ("1e-9") is taken as SI, like a YAML number.
    return { ok: true, value: q.scalar };
  }
  if (si === '' || !q.isCompatible(si)) {
    const fix = si === '' ? percentFix(input) : null;
    return {
      ok: false,
      message: `expected ${EXAMPLES[kind]}, found '${input}' (${fix ?? 'unit of another kind'})`,
    };
  }
  const value = q.to(si).scalar;
  if (!Number.isFinite(value)) return { ok: false, message: `expected ${EXAMPLES[kind]}, found '${input}'` };
  return { ok: true, value };
}

const PREFIXES = ['p', 'n', 'u', 'm', '', 'k', 'M', 'G', 'T'];
const PREFIX_WORDS: Record<string, string> = {
  p: 'pico',
  n: 'nano',
  u: 'micro',
  m: 'milli',
  '': '',
  k: 'kilo',
  M: 'mega',
  G: 'giga',
  T: 'tera',
};
/** Unit symbols of each kind a scenario is likely to use, for the case-repair hint. */
const SYMBOLS: Partial<Record<QuantityKind, string[]>> = {
  length: ['m'],
  time: ['s'],
  frequency: ['Hz'],
  power: ['W'],
  voltage: ['V'],
  current: ['A'],
  capacitance: ['F'],
  mass: ['g'],
  force: ['N'],
};

/**
 * When "200 khz" fails only because of letter case, the spelling(s) meant, as a fix to
 * print: unit symbols are case-sensitive (m is milli, M is mega), so the tool does not
 * guess; it names the one reading ("write '200 kHz'") or both ("'200 MHz' (mega) or
 * '200 mHz' (milli)"). Null when no case change gives a unit of this kind.
 */
export function unitFix(text: string, kind: QuantityKind): string | null {
  const m = /^([-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)\s*([A-Za-z]+)$/i.exec(text.trim());
  if (!m) return null;
  const [, num, unit] = m;
  const found: [string, string][] = [];
  for (const sym of SYMBOLS[kind] ?? [])
    for (const p of PREFIXES) {
      const cand = `${p}${sym}`;
      if (cand.toLowerCase() === unit.toLowerCase() && cand !== unit) found.push([cand, p]);
    }
  if (found.length === 0) return null;
  if (found.length === 1) return `unit symbols are case-sensitive: write '${num} ${found[0][0]}'`;
  return `unit symbols are case-sensitive: write ${found
    .map(([c, p]) => `'${num} ${c}' (${PREFIX_WORDS[p] || 'no prefix'})`)
    .join(' or ')}`;
}

/**
 * A fraction written as a percentage ("99 %") where a plain number is expected: the fix,
 * "write 0.99", or null for any other text.
 */
export function percentFix(input: unknown): string | null {
  if (typeof input !== 'string') return null;
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)\s*%\s*$/i.exec(input);
  if (!m) return null;
  const v = Number(m[1]) / 100;
  return `fractions are plain numbers here: write ${Number(v.toPrecision(12))} for ${m[1]} %`;
}

/** Format a SI value with an engineering prefix: formatSI(2.2e-1, 'm') -> "220 mm". */
export function formatSI(value: number, unit: string, digits = 4): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`.trim();
  if (value === 0) return `0 ${unit}`.trim();
  const prefixes: [number, string][] = [
    [1e12, 'T'],
    [1e9, 'G'],
    [1e6, 'M'],
    [1e3, 'k'],
    [1, ''],
    [1e-3, 'm'],
    [1e-6, 'u'],
    [1e-9, 'n'],
    [1e-12, 'p'],
    [1e-15, 'f'],
  ];
  const a = Math.abs(value);
  for (const [scale, p] of prefixes) {
    if (a >= scale * 0.9999999) return `${Number((value / scale).toPrecision(digits))} ${p}${unit}`.trim();
  }
  return `${value.toExponential(digits - 1)} ${unit}`.trim();
}

/** A short description of a value of the wrong type, for messages. */
export function describeFound(input: unknown): string {
  if (input === null || input === undefined) return 'nothing';
  if (Array.isArray(input)) return 'a list';
  if (typeof input === 'object') return 'a mapping';
  if (typeof input === 'string') return `'${input}'`;
  return `${typeof input} ${String(input)}`;
}
