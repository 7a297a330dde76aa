/**
 * Bad scenario files: every problem of a file at once, each with the key path in dot
 * form, the line where it sits and "expected ..., found ...". The expected line is found
 * by searching the test's own text, independently of the loader's YAML positions.
 */
import { describe, expect, it } from 'vitest';
import { parseScenarioText, normaliseScenarioForJson, scenarioSha256 } from '../src/scenario/load';
import { InputError, InputProblem } from '../src/scenario/errors';
import { numericKeyPaths, withOverrides } from '../src/scenario/validate';
import { scenarioSchema } from '../src/scenario/schema';

// An invented bench set-up (demo numbers only), one key per line so lines are easy to find.
const BASE = `name: test-bench
laser:
  wavelength: 1064 nm
  cavity_length: 15 cm
  rear_mirror:
    reflectivity: 0.998
    radius: 50 cm
  output_coupler:
    reflectivity: 0.97
    loss: 0.001
    radius: flat
  internal_loss: 0.001
  gain:
    linewidth: 120 GHz
    pump_ratio: 2
    saturation_power: 1 W
    inversion_lifetime: 230 us
external:
  length: 4 cm
  return_mirror:
    reflectivity: 0.999
    radius: 30 cm
drive:
  amplitude: 200 nm
  frequency: 50 kHz
simulation:
  periods: 10
sweep:
  axes:
    - key: drive.amplitude
      from: 10 nm
      to: 1 um
      points: 4
      scale: log
`;

/** 1-based line of the first line containing `needle` (after `after`, if given). */
function lineOf(text: string, needle: string, after = 0): number {
  const lines = text.split('\n');
  for (let i = after; i < lines.length; i++) if (lines[i].includes(needle)) return i + 1;
  throw new Error(`test text has no line with ${needle}`);
}

function problemsOf(text: string, label = 'bad.yaml'): InputProblem[] {
  try {
    parseScenarioText(text, label);
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    const e = err as InputError;
    expect(e.file).toBe(label);
    expect(e.exitCode).toBe(2);
    return e.problems;
  }
  throw new Error('expected the scenario to be refused');
}

function find(problems: InputProblem[], path: string): InputProblem {
  const p = problems.find((q) => q.path === path);
  if (!p) throw new Error(`no problem at ${path}; got ${JSON.stringify(problems)}`);
  return p;
}

describe('scenario errors name the key path, the line and what was expected', () => {
  it('the base text itself is valid', () => {
    const s = parseScenarioText(BASE, 'base.yaml').scenario;
    expect(s.laser.cavity_length).toBeCloseTo(0.15, 15);
    expect(s.laser.output_coupler.radius).toBe(Infinity);
  });

  it('reflectivity 1.2 (R must stay below 1)', () => {
    const text = BASE.replace('reflectivity: 0.97', 'reflectivity: 1.2');
    const ps = problemsOf(text);
    const p = find(ps, 'laser.output_coupler.reflectivity');
    expect(p.message).toBe('expected a number >= 0 and < 1, found 1.2');
    expect(p.line).toBe(lineOf(text, 'reflectivity: 1.2'));
    // the follow-on "R + T + loss" complaint of the same mirror is not repeated
    expect(ps).toHaveLength(1);
  });

  it('a misspelt key is named with the nearest valid key, and the missing one too', () => {
    const text = BASE.replace('cavity_length: 15 cm', 'cavity_lenght: 15 cm');
    const ps = problemsOf(text);
    const p = find(ps, 'laser.cavity_lenght');
    expect(p.message).toBe("unknown key 'cavity_lenght' (did you mean 'cavity_length'?)");
    expect(p.line).toBe(lineOf(text, 'cavity_lenght'));
    expect(p.column).toBe(3);
    expect(find(ps, 'laser.cavity_length').message).toMatch(/^expected a length .*, found nothing$/);
  });

  it('a unit of the wrong kind', () => {
    const text = BASE.replace('saturation_power: 1 W', 'saturation_power: 1 kHz');
    const p = find(problemsOf(text), 'laser.gain.saturation_power');
    expect(p.message).toBe(
      "expected a power such as '0.3 W' or 0.3 (watts), found '1 kHz' (unit of another kind)",
    );
    expect(p.line).toBe(lineOf(text, 'saturation_power'));
  });

  it('a negative length', () => {
    const text = BASE.replace('length: 4 cm', 'length: -4 cm');
    const p = find(problemsOf(text), 'external.length');
    expect(p.message).toBe('expected a value > 0, found "-4 cm"');
    expect(p.line).toBe(lineOf(text, 'length: -4 cm'));
  });

  it('a missing required key points at its parent mapping', () => {
    const text = BASE.replace('  wavelength: 1064 nm\n', '');
    const p = find(problemsOf(text), 'laser.wavelength');
    expect(p.message).toBe("expected a length such as '22 cm' or 0.22 (metres), found nothing");
    expect(p.line).toBe(lineOf(text, 'laser:'));
  });

  it('a YAML syntax error (duplicate key) gives its line', () => {
    const text = BASE.replace('  internal_loss: 0.001\n', '  internal_loss: 0.001\n  internal_loss: 0.002\n');
    const ps = problemsOf(text);
    expect(ps).toHaveLength(1);
    expect(ps[0].path).toBe('');
    expect(ps[0].message).toMatch(/^YAML syntax: .*unique/i);
    expect(ps[0].line).toBe(lineOf(text, 'internal_loss: 0.002'));
  });

  it('a YAML syntax error (unclosed flow list) is refused with a line, not a stack', () => {
    const text = 'name: x\nlaser:\n  wavelength: [1\n';
    const ps = problemsOf(text);
    expect(ps[0].message).toMatch(/^YAML syntax: /);
    expect(ps[0].line).toBeGreaterThanOrEqual(3);
  });

  it('reflectivity + transmission + loss above 1', () => {
    const text = BASE.replace('    loss: 0.001\n', '    loss: 0.001\n    transmission: 0.05\n');
    const p = find(problemsOf(text), 'laser.output_coupler.loss');
    expect(p.message).toMatch(
      /^expected reflectivity \+ transmission \+ loss <= 1, found 0\.97 \+ 0\.05\d* \+ 0\.001$/,
    );
    expect(p.line).toBe(lineOf(text, 'loss: 0.001'));
  });

  it('a wavelength outside the optical range', () => {
    const text = BASE.replace('wavelength: 1064 nm', 'wavelength: 50 um');
    const p = find(problemsOf(text), 'laser.wavelength');
    expect(p.message).toBe('expected an optical wavelength from 100 nm to 20 um, found "50 um"');
    expect(p.line).toBe(lineOf(text, 'wavelength'));
  });

  it('a sweep axis naming a key that does not exist, with the nearest numeric key', () => {
    const text = BASE.replace('key: drive.amplitude', 'key: drive.amplitud');
    const p = find(problemsOf(text), 'sweep.axes[0].key');
    expect(p.message).toBe(
      "expected a numeric key path of the scenario (did you mean 'drive.amplitude'?), found 'drive.amplitud'",
    );
    expect(p.line).toBe(lineOf(text, 'drive.amplitud'));
  });

  it('a sweep axis naming a key that is not numeric', () => {
    const text = BASE.replace('key: drive.amplitude', 'key: drive.waveform');
    expect(find(problemsOf(text), 'sweep.axes[0].key').message).toMatch(/^expected a numeric key path/);
  });

  it('a log axis starting at 0', () => {
    const text = BASE.replace('from: 10 nm', 'from: 0 nm');
    const p = find(problemsOf(text), 'sweep.axes[0].from');
    expect(p.message).toBe('expected a value > 0 on a log axis, found "0 nm"');
    expect(p.line).toBe(lineOf(text, 'from: 0 nm'));
  });

  it('an axis value of the wrong kind for its key', () => {
    const text = BASE.replace('to: 1 um', 'to: 1 MHz');
    const p = find(problemsOf(text), 'sweep.axes[0].to');
    expect(p.message).toContain('setting drive.amplitude to "1 MHz": expected a length');
  });

  it('a non-integer number of periods', () => {
    const text = BASE.replace('periods: 10', 'periods: 2.5');
    const p = find(problemsOf(text), 'simulation.periods');
    expect(p.message).toBe('expected a whole number from 1 to 1000000, found 2.5');
    expect(p.line).toBe(lineOf(text, 'periods'));
  });

  it('a list where a mapping belongs', () => {
    const text = BASE.replace(
      '  rear_mirror:\n    reflectivity: 0.998\n    radius: 50 cm\n',
      '  rear_mirror: [0.998, 0, 0.5]\n',
    );
    const p = find(problemsOf(text), 'laser.rear_mirror');
    expect(p.message).toBe('expected a mapping, found a list');
    expect(p.line).toBe(lineOf(text, 'rear_mirror'));
  });

  it('an external cavity shorter than 1 mm is refused, saying why', () => {
    const text = BASE.replace('length: 4 cm', 'length: 0.5 mm').replace(
      'amplitude: 200 nm',
      'amplitude: 20 nm',
    );
    const p = find(problemsOf(text), 'external.length');
    expect(p.message).toMatch(/^expected an external length > 1 mm, found 500 um/);
    expect(p.line).toBe(lineOf(text, 'length: 0.5 mm'));
  });

  it('a laser cavity longer than 100 m is refused (a unit slip)', () => {
    const text = BASE.replace('cavity_length: 15 cm', 'cavity_length: 150');
    expect(find(problemsOf(text), 'laser.cavity_length').message).toMatch(
      /^expected a cavity length <= 100 m, found 150 m/,
    );
  });

  it('a stroke that would push the return mirror into the output coupler', () => {
    const text = BASE.replace('amplitude: 200 nm', 'amplitude: 5 cm');
    expect(find(problemsOf(text), 'drive.amplitude').message).toMatch(
      /^expected the return mirror to stay clear/,
    );
  });

  it('an unknown enum value and a wrong type', () => {
    const text = BASE.replace('  gain:\n', '  gain:\n    shape: triangular\n').replace(
      'name: test-bench',
      'name: [a]',
    );
    const ps = problemsOf(text);
    expect(find(ps, 'laser.gain.shape').message).toBe(
      "expected one of gaussian, lorentzian, parabolic, found 'triangular'",
    );
    expect(find(ps, 'name').message).toBe('expected a name (text), found a list');
  });

  it("'auto' or a number: a bad value names both", () => {
    const text = BASE.replace('    radius: 30 cm\n', '    radius: 30 cm\n  feedback_efficiency: lots\n');
    expect(find(problemsOf(text), 'external.feedback_efficiency').message).toBe(
      "expected 'auto' or a number >= 0 and <= 1, found 'lots'",
    );
  });

  it('all problems of a file are reported at once, in file order', () => {
    const text = BASE.replace('reflectivity: 0.97', 'reflectivity: 1.2')
      .replace('periods: 10', 'periods: 2.5')
      .replace('key: drive.amplitude', 'key: drive.amplitud');
    const ps = problemsOf(text);
    expect(ps.map((p) => p.path)).toEqual([
      'laser.output_coupler.reflectivity',
      'simulation.periods',
      'sweep.axes[0].key',
    ]);
    const lines = ps.map((p) => p.line ?? 0);
    expect(lines).toEqual([...lines].sort((a, b) => a - b));
  });

  it('an empty file and a file holding a list', () => {
    expect(problemsOf('')[0].message).toMatch(/^expected a mapping .*, found nothing$/);
    expect(problemsOf('- 1\n- 2\n')[0].message).toMatch(/found a list$/);
  });

  it('JSON files: problems carry lines too, and strict JSON is required of *.json', () => {
    const json = JSON.stringify(parseScenarioText(BASE, 'b.yaml').raw, null, 2).replace(
      '"reflectivity": 0.97',
      '"reflectivity": 1.2',
    );
    const p = find(problemsOf(json, 'bad.json'), 'laser.output_coupler.reflectivity');
    expect(p.line).toBe(lineOf(json, '"reflectivity": 1.2'));
    const trailing = problemsOf('{"name": "x",}', 'bad.json');
    expect(trailing[0].message).toMatch(/^JSON syntax: /);
  });

  it('the formatted error names file:line:column and the key path', () => {
    const text = BASE.replace('periods: 10', 'periods: 2.5');
    const line = lineOf(text, 'periods');
    expect(() => parseScenarioText(text, 'bench.yaml')).toThrow(
      `bench.yaml:${line}:12: simulation.periods: expected a whole number from 1 to 1000000, found 2.5`,
    );
  });
});

describe('canonical form and overrides', () => {
  it('a normalised scenario re-parses to the same values, and the hash ignores key order', () => {
    const a = parseScenarioText(BASE, 'a.yaml');
    const again = scenarioSchema.parse(normaliseScenarioForJson(a.scenario));
    expect(again).toEqual(a.scenario);
    expect(normaliseScenarioForJson(a.scenario)).toMatchObject({
      laser: { output_coupler: { radius: 'flat' } },
    });
    // same content, top-level sections in another order, units written differently
    const reordered = BASE.replace(/^simulation:\n {2}periods: 10\n/m, '')
      .replace('name: test-bench\n', 'simulation:\n  periods: 10\nname: test-bench\n')
      .replace('15 cm', '150 mm');
    const b = parseScenarioText(reordered, 'b.yaml');
    expect(b.sha256).toBe(a.sha256);
    expect(a.sha256).toMatch(/^[0-9a-f]{64}$/);
    expect(scenarioSha256(withOverrides(a.scenario, { 'drive.amplitude': 1e-7 }))).not.toBe(a.sha256);
  });

  it('withOverrides returns a new validated scenario and leaves the base alone', () => {
    const base = parseScenarioText(BASE, 'a.yaml').scenario;
    const before = JSON.stringify(normaliseScenarioForJson(base));
    const s = withOverrides(base, {
      'drive.amplitude': '80 nm',
      'laser.gain.pump_ratio': 1.5,
      'actuator.stroke_per_volt': '10 nm/V',
    });
    expect(s.drive.amplitude).toBeCloseTo(80e-9, 20);
    expect(s.laser.gain.pump_ratio).toBe(1.5);
    expect(s.actuator?.stroke_per_volt).toBeCloseTo(1e-8, 20);
    expect(s.actuator?.quality_factor).toBe(20); // the schema default filled in
    expect(JSON.stringify(normaliseScenarioForJson(base))).toBe(before);
    expect(base.actuator).toBeUndefined();
  });

  it('withOverrides names the bad key, with a suggestion for a misspelling', () => {
    const base = parseScenarioText(BASE, 'a.yaml').scenario;
    const problems = (o: Record<string, number | string>) => {
      try {
        withOverrides(base, o);
      } catch (err) {
        expect(err).toBeInstanceOf(InputError);
        return (err as InputError).problems;
      }
      throw new Error('expected a refusal');
    };
    expect(problems({ 'drive.amplitud': 1e-7 })).toEqual([
      { path: 'drive.amplitud', message: "unknown key 'amplitud' (did you mean 'amplitude'?)" },
    ]);
    expect(problems({ 'laser.cavity_length': '3 kHz' })[0].path).toBe('laser.cavity_length');
    expect(problems({ 'laser.cavity_length.x': 1 })[0].message).toMatch(
      /^expected laser\.cavity_length to be a mapping/,
    );
    expect(problems({ 'laser..x': 1 })[0].message).toMatch(/^expected a key path/);
  });

  it('numericKeyPaths lists the numeric keys of the schema and nothing else', () => {
    const keys = numericKeyPaths();
    for (const k of [
      'drive.amplitude',
      'drive.frequency',
      'laser.cavity_length',
      'laser.output_coupler.reflectivity',
      'simulation.periods',
      'external.feedback_efficiency',
      'actuator.resonance',
    ]) {
      expect(keys).toContain(k);
    }
    for (const k of [
      'name',
      'drive.waveform',
      'laser.gain.shape',
      'external.return_to_laser',
      'sweep.axes',
      'laser.gain',
    ]) {
      expect(keys).not.toContain(k);
    }
    // a listed key really takes a number through withOverrides
    const base = parseScenarioText(BASE, 'a.yaml').scenario;
    expect(withOverrides(base, { 'laser.refractive_index': 1.5 }).laser.refractive_index).toBe(1.5);
  });
});
