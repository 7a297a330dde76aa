/**
 * One wording across the tool: the README's "Words used" list is the reports' glossary,
 * term for term, and every term a report asks for has a definition.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { GLOSSARY, RUN_TERMS, SWEEP_TERMS } from '../src/report';

const README = readFileSync(join(__dirname, '..', 'README.md'), 'utf8');

describe('glossary', () => {
  it('the README lists every term with the definition the reports print', () => {
    const section = README.slice(README.indexOf('## Words used'), README.indexOf('## Actuator'));
    for (const [term, text] of Object.entries(GLOSSARY)) expect(section).toContain(`- **${term}**: ${text}`);
  });

  it('every term a run or sweep report uses is defined', () => {
    for (const t of [...RUN_TERMS, ...SWEEP_TERMS]) expect(Object.keys(GLOSSARY)).toContain(t);
  });
});
