/**
 * The real binary: `node bin/dithercav.js check|schema`, exit codes and messages included.
 * Needs dist/ built (`npm test` builds it first; alone: `npm run build`).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { cli, requireDist, ROOT } from './fixtures/cli';

const tmp = scratchDir('cli');

/** A stack frame line as Node prints them ("    at fn (file:1:2)"). */
const STACK_FRAME = /^\s+at .+[(:]/m;

beforeAll(() => {
  requireDist();
});

describe('dithercav check', () => {
  it('the demo scenario is valid (exit 0) and the report shows FSRs, finesse, beams, coupling and modes', () => {
    const r = cli('check', 'scenarios/demo.yaml');
    expect(r.err).toBe('');
    expect(r.code).toBe(0);
    // FSR = c / (2 n L) for L = 22 cm, n = 1: 681.3 MHz (Saleh & Teich, Fundamentals of
    // Photonics, chapter "Resonator Optics"; from memory, chapter number not checked); 4 digits.
    expect(r.out).toMatch(/free spectral range\s+681\.3 MHz/);
    // external: c / (2 x 9 cm) = 1.666 GHz, same relation
    expect(r.out).toMatch(/free spectral range\s+1\.666 GHz/);
    expect(r.out).toMatch(/finesse\s+\d/);
    expect(r.out).toMatch(/radius at M1\s+\d/);
    expect(r.out).toMatch(/radius at M2\s+\d/);
    expect(r.out).toMatch(/radius at M3\s+\d/);
    // the demo's gap is stable (g2 g3 = 0.94): eta_fb from the eigenmode, eta_rt = 1 (docs/model.md §2.4)
    expect(r.out).toMatch(/feedback efficiency\s+0\.\d+\s+from Gaussian beams: eigenmode overlap/);
    expect(r.out).toMatch(/round-trip efficiency\s+1\s+from Gaussian beams: stable gap/);
    // Airy finesse pi sqrt(rho) / (1 - rho), rho = sqrt(R2 R3) = sqrt(0.99 x 0.9995) (Siegman,
    // Lasers, ch. 11): 595.5 to 4 digits, no mode-mismatch loss per round trip
    expect(r.out).toMatch(/finesse\s+595\.5\s/);
    expect(r.out).toMatch(/photon lifetime\s+\d/);
    expect(r.out).toMatch(/Laser modes \(\d+\)/);
    expect(r.out).toMatch(/index\s+offset from gain peak/);
    expect(r.out).not.toContain('\u001b['); // NO_COLOR and a pipe: plain text
  });

  it('--json prints the file, the scenario hash and the derived quantities', () => {
    const r = cli('check', 'scenarios/demo.yaml', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.file).toBe('scenarios/demo.yaml');
    expect(j.scenario_sha256).toMatch(/^[0-9a-f]{64}$/);
    // c = 299 792 458 m/s exactly (SI definition of the metre); FSR = c / (2 L), L = 0.22 m
    expect(Math.abs(j.derived.fsr_laser_Hz / (299792458 / 0.44) - 1)).toBeLessThan(1e-12);
    expect(Array.isArray(j.derived.modes)).toBe(true);
    expect(j.derived.modes.length).toBeGreaterThan(0);
    expect(j.derived.beams.radius_at_M2_m).toBeGreaterThan(0);
  });

  it('the sweep demo is valid too', () => {
    expect(cli('check', 'scenarios/demo-sweep.yaml').code).toBe(0);
  });

  it('a bad file exits 2 naming file, line and key path, without a stack trace', () => {
    const text = readFileSync(join(ROOT, 'scenarios', 'demo.yaml'), 'utf8')
      .replace('reflectivity: 0.99 ', 'reflectivity: 1.2 ')
      .replace('cavity_length: 22 cm', 'cavity_lenght: 22 cm');
    const file = join(tmp, 'bad.yaml');
    writeFileSync(file, text);
    const line = text.split('\n').findIndex((l) => l.includes('reflectivity: 1.2')) + 1;
    const r = cli('check', file);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toContain(`${file}:${line}:`);
    expect(r.err).toContain('laser.output_coupler.reflectivity: expected a number >= 0 and < 1, found 1.2');
    expect(r.err).toContain("did you mean 'cavity_length'?");
    expect(r.err).not.toMatch(STACK_FRAME);
  });

  it('a YAML syntax error, a missing file and a bad sweep key all exit 2 without a stack trace', () => {
    const syntax = join(tmp, 'syntax.yaml');
    writeFileSync(syntax, 'name: x\nlaser: {wavelength: 1 um\n');
    const sweep = join(tmp, 'sweep.yaml');
    writeFileSync(
      sweep,
      readFileSync(join(ROOT, 'scenarios', 'demo-sweep.yaml'), 'utf8').replace(
        'key: drive.frequency',
        'key: drive.frequncy',
      ),
    );
    for (const [args, needle] of [
      [['check', syntax], 'YAML syntax'],
      [['check', join(tmp, 'absent.yaml')], 'no such file'],
      [
        ['check', sweep],
        "sweep.axes[1].key: expected a numeric key path of the scenario (did you mean 'drive.frequency'?)",
      ],
    ] as [string[], string][]) {
      const r = cli(...args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.err).toContain(needle);
      expect(r.err).not.toMatch(STACK_FRAME);
    }
  });

  it('a missing argument is a command-line error (exit 2)', () => {
    const r = cli('check');
    expect(r.code).toBe(2);
    expect(r.err).not.toMatch(STACK_FRAME);
  });
});

describe('dithercav schema', () => {
  it('prints valid JSON Schema with the scenario sections', () => {
    const r = cli('schema');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.title).toBe('dithercav scenario');
    expect(typeof j.$id).toBe('string');
    expect(j.properties.laser.type).toBe('object');
    expect(j.properties.laser.properties.gain.properties.pump_ratio).toBeDefined();
    expect(j.required).toEqual(expect.arrayContaining(['name', 'laser']));
  });
});

describe('--engine', () => {
  it('run, sweep and batch offer exactly the engines of the schema that `dithercav schema` prints', () => {
    const engines: string[] = JSON.parse(cli('schema').out).properties.simulation.properties.engine.enum;
    expect(engines.length).toBeGreaterThan(1);
    for (const command of ['run', 'sweep', 'batch']) {
      const r = cli(command, 'scenarios/demo.yaml', '--engine', 'no-such-engine');
      expect(r.code, command).toBe(2);
      expect(r.err).toContain(`Allowed choices are ${engines.join(', ')}.`);
    }
  });
});
