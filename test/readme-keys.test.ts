/**
 * The README's scenario key table and the schema name the same keys, both ways, so the
 * documentation cannot drift from the format (STYLE.md: one schema).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { allKeyPaths, numericKeyPaths } from '../src/scenario/shape';

function readmeKeys(): string[] {
  const text = readFileSync(join(__dirname, '..', 'README.md'), 'utf8');
  const start = text.indexOf('| key | unit | default | meaning |');
  if (start < 0) throw new Error('README has no scenario key table');
  const keys: string[] = [];
  for (const line of text.slice(start).split('\n').slice(2)) {
    if (!line.startsWith('|')) break;
    const m = /^\|\s*`([^`]+)`\s*\|/.exec(line);
    if (!m) throw new Error(`key table row without a key: ${line}`);
    keys.push(m[1]);
  }
  return keys;
}

describe('README key table', () => {
  it('lists every key of the schema, and no key the schema lacks', () => {
    const documented = readmeKeys();
    const schema = allKeyPaths();
    expect(documented.filter((k) => !schema.includes(k))).toEqual([]);
    expect(schema.filter((k) => !documented.includes(k))).toEqual([]);
    expect(new Set(documented).size).toBe(documented.length);
  });

  it('every numeric key path (the keys a sweep may name) is in the table', () => {
    const documented = readmeKeys();
    expect(numericKeyPaths().filter((k) => !documented.includes(k))).toEqual([]);
  });
});
