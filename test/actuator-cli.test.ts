// Runs the real binary: needs `npm run build` first (npm test does it).
import { describe, expect, it } from 'vitest';
import { cli, ROOT } from './fixtures/cli';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadScenarioFile } from '../src/scenario/load';
import { actuatorSheet } from '../src/physics/actuator';

const DEMO = join(ROOT, 'scenarios', 'demo.yaml');

describe('dithercav actuator', () => {
  it('--json prints the same sheet as actuatorSheet on the loaded scenario', () => {
    const r = cli('actuator', DEMO, '--json');
    expect(r.code).toBe(0);
    const expected = JSON.parse(JSON.stringify(actuatorSheet(loadScenarioFile(DEMO).scenario)));
    expect(JSON.parse(r.out)).toEqual(expected);
  });

  it('prints a table with limits and statuses', () => {
    const r = cli('actuator', DEMO);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/^quantity\s+value\s+limit\s+status$/m);
    for (const q of [
      'stroke (peak to peak)',
      'peak speed',
      'peak Doppler shift',
      'peak voltage',
      'peak reactive current',
      'resonance margin f0 / f',
    ]) {
      expect(r.out).toContain(q);
    }
    expect(r.out).toMatch(/peak voltage\s+\S+ V\s+<= \S+ V\s+(OK|EXCEEDED)/);
  });

  it('marks a limit exceeded', () => {
    const dir = mkdtempSync(join(tmpdir(), 'dithercav-actuator-'));
    const file = join(dir, 'tight.yaml');
    // the demo with a voltage limit of 1 mV, which no stroke of nanometres meets
    writeFileSync(file, readFileSync(DEMO, 'utf8').replace(/max_voltage:[^\n#]*/, 'max_voltage: 1 mV '));
    const r = cli('actuator', file);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/peak voltage\s+\S+ V\s+<= 1 mV\s+EXCEEDED/);
    expect(r.out).toMatch(/limits exceeded: .*actuator\.max_voltage/);
  });

  it('bad input: exit 2 and a message naming the file', () => {
    const r = cli('actuator', join(ROOT, 'scenarios', 'no-such-file.yaml'));
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/no-such-file\.yaml/);
  });
});
