/**
 * Checks the schema cannot express (they need several keys at once, or physics), and
 * `withOverrides`, the one way to derive a scenario from another (sweep points, engine
 * comparisons): a validated copy with some keys set, never a mutation of the base.
 */
import { InputError, InputProblem } from './errors';
import { Scenario, scenarioSchema } from './schema';
import { formatKeyPath, parseKeyPath, PathSegment } from './keypath';
import { nearestKey, numericKeyPaths } from './shape';
import { issuesToProblems } from './issues';
import { normaliseScenarioForJson } from './canonical';
import { formatSI } from './units';

export { numericKeyPaths } from './shape';

/** Problems of a validated scenario: errors refuse it (exit 2), warnings are advice. */
export interface ValidationResult {
  errors: InputProblem[];
  warnings: InputProblem[];
}

const MAX_CAVITY_m = 100; // longer "cavities" are almost surely a unit slip (cm written as m)
const MIN_EXTERNAL_m = 1e-3;

function getAt(obj: unknown, path: readonly PathSegment[]): unknown {
  let cur = obj;
  for (const seg of path) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<string | number, unknown>)[seg];
  }
  return cur;
}

/**
 * Set `path` to `value` inside a plain JSON tree, creating missing mappings on the way.
 * Returns an error sentence if the path runs through a value that is not a mapping.
 */
function setAt(root: Record<string, unknown>, path: readonly PathSegment[], value: unknown): string | null {
  let cur: unknown = root;
  for (let i = 0; i < path.length - 1; i++) {
    const seg = path[i];
    const container = cur as Record<string | number, unknown>;
    let next = container[seg];
    if (next === undefined && typeof seg === 'string') {
      next = {};
      container[seg] = next;
    }
    if (next === null || typeof next !== 'object') {
      return `expected ${formatKeyPath(path.slice(0, i + 1))} to be a mapping or list, found ${next === undefined ? 'nothing' : 'a value'}`;
    }
    cur = next;
  }
  (cur as Record<string | number, unknown>)[path[path.length - 1]] = value;
  return null;
}

/**
 * A new validated scenario: `base` with each dot-path key of `overrides` set
 * ("drive.amplitude": 8e-8 or "80 nm"; units as in a scenario file). Sections missing from
 * base (an optional `actuator`) are created. `base` is never changed.
 * Throws InputError (file null) naming the key when a key does not exist, a value is
 * refused by the schema, or the result fails the physical checks of `validateScenario`
 * (the sweep section excepted: overrides never re-check the grid itself).
 */
export function withOverrides(base: Scenario, overrides: Record<string, number | string>): Scenario {
  const json = normaliseScenarioForJson(base);
  const problems: InputProblem[] = [];
  for (const [key, value] of Object.entries(overrides)) {
    const path = parseKeyPath(key);
    if (path === null) {
      problems.push({ path: key, message: `expected a key path such as 'drive.amplitude', found '${key}'` });
      continue;
    }
    const err = setAt(json, path, value);
    if (err) problems.push({ path: key, message: err });
  }
  if (problems.length > 0) throw new InputError(null, problems);
  const parsed = scenarioSchema.safeParse(json, { reportInput: true });
  if (!parsed.success) {
    throw new InputError(
      null,
      issuesToProblems(parsed.error.issues).map((p) => ({ path: formatKeyPath(p.path), message: p.message })),
    );
  }
  const errors = physicalChecks(parsed.data).errors;
  if (errors.length > 0) throw new InputError(null, errors);
  return parsed.data;
}

/** Checks on one scenario's physics (no sweep). */
function physicalChecks(s: Scenario): ValidationResult {
  const errors: InputProblem[] = [];
  const warnings: InputProblem[] = [];
  const L1 = s.laser.cavity_length;
  if (L1 > MAX_CAVITY_m) {
    errors.push({
      path: 'laser.cavity_length',
      message: `expected a cavity length <= ${MAX_CAVITY_m} m, found ${formatSI(L1, 'm')} (a unit slip?)`,
    });
  }
  if (L1 < 10 * s.laser.wavelength) {
    errors.push({
      path: 'laser.cavity_length',
      message: `expected a cavity at least 10 wavelengths long (${formatSI(10 * s.laser.wavelength, 'm')}), found ${formatSI(L1, 'm')}`,
    });
  }
  const g = s.laser.gain;
  if (g.broadening === 'inhomogeneous' && g.homogeneous_width >= g.linewidth / 2) {
    warnings.push({
      path: 'laser.gain.homogeneous_width',
      message: `spectral holes (${formatSI(g.homogeneous_width, 'Hz')}) are as wide as the gain line (FWHM ${formatSI(g.linewidth, 'Hz')}): the medium behaves as homogeneous`,
    });
  }
  const fsr1 = 299792458 / (2 * s.laser.refractive_index * L1);
  const spanned = g.linewidth / fsr1;
  if (spanned > g.max_modes) {
    warnings.push({
      path: 'laser.gain.max_modes',
      message: `the gain line spans about ${Math.round(spanned)} laser mode spacings, more than max_modes ${g.max_modes}: the weakest modes are left out`,
    });
  }
  const d = s.drive;
  const swing = d.waveform === 'off' ? 0 : d.amplitude + (d.waveform === 'two-tone' ? d.second_amplitude : 0);
  if (s.external) {
    const L2 = s.external.length;
    if (L2 < MIN_EXTERNAL_m) {
      errors.push({
        path: 'external.length',
        message: `expected an external length > ${formatSI(MIN_EXTERNAL_m, 'm')}, found ${formatSI(L2, 'm')} (below 1 mm the gap is a thin etalon, outside what the round-trip model is made for)`,
      });
    } else if (L2 > MAX_CAVITY_m) {
      errors.push({
        path: 'external.length',
        message: `expected an external length <= ${MAX_CAVITY_m} m, found ${formatSI(L2, 'm')} (a unit slip?)`,
      });
    }
    if (L2 + d.offset - swing <= 0) {
      errors.push({
        path: 'drive.amplitude',
        message: `expected the return mirror to stay clear of the output coupler (length + offset - amplitude > 0), found ${formatSI(L2 + d.offset - swing, 'm')}`,
      });
    } else {
      // the delay-line engine reads the returned field from its history: the shortest
      // round trip must stay longer than 1.5 of its steps, tau_E / substeps
      const excursion = Math.abs(d.offset) + swing + s.laser.wavelength / 2 + 5 * (d.vibration?.rms ?? 0);
      const limit = L2 * (1 - 1.5 / s.simulation.substeps);
      if (excursion >= limit) {
        errors.push({
          path: 'drive.amplitude',
          message: `expected the mirror's excursion (|offset| + amplitudes + half a wavelength) below ${formatSI(limit, 'm')} (external.length x (1 - 1.5 / simulation.substeps)), found ${formatSI(excursion, 'm')}; raise simulation.substeps or shorten the stroke`,
        });
      }
    }
  } else if (swing > 0) {
    warnings.push({
      path: 'drive.amplitude',
      message: 'there is no external cavity: the drive moves nothing',
    });
  }
  if (d.waveform === 'off' && d.amplitude > 0) {
    warnings.push({
      path: 'drive.amplitude',
      message: `waveform is 'off': the amplitude ${formatSI(d.amplitude, 'm')} is ignored`,
    });
  }
  const a = s.actuator;
  if (a) {
    if (
      a.resonance !== undefined &&
      d.waveform !== 'off' &&
      a.resonance < a.min_resonance_margin * d.frequency
    ) {
      warnings.push({
        path: 'actuator.resonance',
        message: `the resonance ${formatSI(a.resonance, 'Hz')} is less than ${a.min_resonance_margin} x the drive frequency ${formatSI(d.frequency, 'Hz')}`,
      });
    }
    if (a.max_voltage !== undefined && swing / a.stroke_per_volt > a.max_voltage) {
      warnings.push({
        path: 'actuator.max_voltage',
        message: `the drive needs about ${formatSI(swing / a.stroke_per_volt, 'V')} (static stroke per volt), above max_voltage ${formatSI(a.max_voltage, 'V')}`,
      });
    }
    if (a.resonance !== undefined && a.stiffness !== undefined && a.moving_mass !== undefined) {
      // f0 = sqrt(k / m) / (2 pi) for a mass on a spring (common practice, no source)
      const f0 = Math.sqrt(a.stiffness / a.moving_mass) / (2 * Math.PI);
      if (Math.abs(f0 / a.resonance - 1) > 0.1) {
        warnings.push({
          path: 'actuator.resonance',
          message: `stiffness and moving_mass give a resonance of ${formatSI(f0, 'Hz')}, not the ${formatSI(a.resonance, 'Hz')} given`,
        });
      }
    }
  }
  return { errors, warnings };
}

/**
 * The problem with a sweep axis key, or null if it names a numeric key path of the schema;
 * the message suggests the nearest numeric key. Needs no valid scenario, so the loader can
 * report it alongside schema errors.
 */
export function axisKeyProblem(key: string, axisIndex: number): InputProblem | null {
  const numeric = numericKeyPaths();
  if (numeric.includes(key)) return null;
  const near = nearestKey(key, numeric);
  return {
    path: `sweep.axes[${axisIndex}].key`,
    message: `expected a numeric key path of the scenario${near ? ` (did you mean '${near}'?)` : ''}, found '${key}'`,
  };
}

/** Checks on the sweep grid: each axis names a numeric key and its values are valid there. */
function sweepChecks(s: Scenario): ValidationResult {
  const errors: InputProblem[] = [];
  const warnings: InputProblem[] = [];
  if (!s.sweep) return { errors, warnings };
  const base: Scenario = { ...s, sweep: undefined };
  const seen = new Map<string, number>();
  let total = 1;
  s.sweep.axes.forEach((axis, i) => {
    const at = `sweep.axes[${i}]`;
    const nValues = 'values' in axis ? axis.values.length : axis.points;
    total *= nValues;
    const keyProblem = axisKeyProblem(axis.key, i);
    if (keyProblem) {
      errors.push(keyProblem);
      return;
    }
    const prior = seen.get(axis.key);
    if (prior !== undefined) {
      errors.push({
        path: `${at}.key`,
        message: `expected each key on one axis only, found '${axis.key}' again (also sweep.axes[${prior}].key)`,
      });
      return;
    }
    seen.set(axis.key, i);
    const keyPath = parseKeyPath(axis.key) as PathSegment[];
    const tryValue = (value: number | string, where: string): number | null => {
      try {
        const v = getAt(withOverrides(base, { [axis.key]: value }), keyPath);
        return typeof v === 'number' ? v : null;
      } catch (err) {
        if (!(err instanceof InputError)) throw err;
        for (const p of err.problems)
          errors.push({
            path: where,
            message: `setting ${p.path || axis.key} to ${JSON.stringify(value)}: ${p.message}`,
          });
        return null;
      }
    };
    if ('values' in axis) {
      axis.values.slice(0, 64).forEach((v, j) => tryValue(v, `${at}.values[${j}]`));
      return;
    }
    const from = tryValue(axis.from, `${at}.from`);
    const to = tryValue(axis.to, `${at}.to`);
    if (axis.scale === 'log') {
      if (from !== null && !(from > 0))
        errors.push({
          path: `${at}.from`,
          message: `expected a value > 0 on a log axis, found ${JSON.stringify(axis.from)}`,
        });
      if (to !== null && !(to > 0))
        errors.push({
          path: `${at}.to`,
          message: `expected a value > 0 on a log axis, found ${JSON.stringify(axis.to)}`,
        });
    }
    if (from !== null && to !== null && from === to && axis.points > 1) {
      warnings.push({
        path: `${at}.to`,
        message: `from and to are equal: the ${axis.points} points are all the same`,
      });
    }
  });
  if (total > 1e6) {
    warnings.push({
      path: 'sweep.axes',
      message: `the grid has ${total.toExponential(2)} points; consider --shard or fewer points`,
    });
  }
  return { errors, warnings };
}

/**
 * All physical-sanity problems of a validated scenario, errors and warnings apart, each
 * naming its key path: cavity lengths in range (<= 100 m; the external one > 1 mm), the
 * return mirror clear of M2 over the whole stroke, sweep axes naming existing numeric
 * keys whose first and last values are valid (and > 0 on a log axis), plus advice
 * (gain line wider than max_modes, actuator resonance or voltage short of the drive).
 */
export function validateScenario(s: Scenario): ValidationResult {
  const a = physicalChecks(s);
  const b = sweepChecks(s);
  return { errors: [...a.errors, ...b.errors], warnings: [...a.warnings, ...b.warnings] };
}
