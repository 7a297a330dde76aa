/**
 * Messages that say how to fix a common slip in a scenario file: an unclosed bracket or
 * quote reported on the line where it was opened (not where the parser gave up), a bare
 * number for a length taken as metres, a unit in the wrong letter case, a percentage where
 * a fraction is expected.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { InputError } from '../src/scenario/errors';
import { parseScenarioText } from '../src/scenario/load';
import { unitFix } from '../src/scenario/units';

const BASE = readFileSync(join(__dirname, 'fixtures', 'report', 'tiny-run.yaml'), 'utf8');

function problems(text: string): { path: string; message: string; line?: number; column?: number }[] {
  try {
    parseScenarioText(text, 'slip.yaml');
  } catch (err) {
    if (err instanceof InputError) return err.problems;
    throw err;
  }
  throw new Error('expected the text to be refused');
}

/** 1-based line of the first line of `text` containing `needle`. */
function lineOf(text: string, needle: string): number {
  return text.split('\n').findIndex((l) => l.includes(needle)) + 1;
}

describe('fixes in the messages', () => {
  it('an unclosed mapping is reported where it opens, past blank and comment lines', () => {
    const text = BASE.replace('external:\n', '\n# a comment line\nexternal:\n').replace(
      '  return_mirror: { reflectivity: 0.99, loss: 0.0002, radius: 1.5 m }',
      '  return_mirror: { reflectivity: 0.99, loss: 0.0002, radius: 1.5 m',
    );
    const p = problems(text);
    expect(p[0].message).toMatch(/this '\{' \(a mapping\) is never closed .*add the closing \}/);
    expect(p[0].line).toBe(lineOf(text, '  return_mirror: {'));
    // the column is that of the brace itself
    expect(p[0].column).toBe(text.split('\n')[p[0].line! - 1].indexOf('{') + 1);
  });

  it('an unclosed list and an unclosed quote point at their opening too', () => {
    const list = BASE.replace('  cavity_length: 22 cm', '  cavity_length: [22 cm');
    expect(problems(list)[0].line).toBe(lineOf(list, 'cavity_length: [22 cm'));
    const quote = BASE.replace('name: report-tiny-run', 'name: "report-tiny-run');
    const q = problems(quote)[0];
    expect(q.line).toBe(lineOf(quote, 'name: "report'));
    expect(q.message).toMatch(/never closed/);
  });

  it('a bare number for a length says numbers are SI metres and how to give a unit', () => {
    const text = BASE.replace('  amplitude: 400 nm', '  amplitude: 400');
    const p = problems(text).find((x) => x.path === 'drive.amplitude')!;
    expect(p.message).toMatch(/a number without a unit is taken in SI units: 400 means 400 m/);
    expect(p.message).toMatch(/'400 nm'/);
  });

  it('a unit in the wrong letter case is refused with the spelling meant, both when ambiguous', () => {
    const khz = problems(BASE.replace('  frequency: 500 kHz', '  frequency: 500 khz')).find(
      (x) => x.path === 'drive.frequency',
    )!;
    expect(khz.message).toMatch(/unit symbols are case-sensitive: write '500 kHz'/);
    // m is milli and M is mega (SI Brochure, 9th edition, table 7): both readings are named
    expect(unitFix('2 mhz', 'frequency')).toBe(
      "unit symbols are case-sensitive: write '2 mHz' (milli) or '2 MHz' (mega)",
    );
    expect(unitFix('2 kHz', 'frequency')).toBeNull(); // already right: nothing to fix
  });

  it('a percentage where a fraction is expected is refused with the fraction to write', () => {
    const text = BASE.replace(
      '  rear_mirror: { reflectivity: 0.999,',
      '  rear_mirror: { reflectivity: 99.9 %,',
    );
    const p = problems(text).find((x) => x.path === 'laser.rear_mirror.reflectivity')!;
    expect(p.message).toMatch(/fractions are plain numbers here: write 0\.999 for 99\.9 %/);
  });
});
