/**
 * `dithercav schema`: the JSON Schema of the scenario format, for editors that complete
 * and check YAML or JSON against it. Generated from the one zod schema, never by hand.
 */
import type { Command } from 'commander';
import { z } from 'zod';
import type { CommandContext } from '../main';
import { scenarioSchema } from '../../scenario/schema';
import { TOOL_VERSION } from '../../version';

/**
 * The scenario's JSON Schema (draft 2020-12) as a plain object, describing the input
 * form (strings with units allowed). Transforms cannot be expressed in JSON Schema;
 * `unrepresentable: 'any'` leaves them unconstrained rather than failing.
 */
export function scenarioJsonSchema(): Record<string, unknown> {
  const generated = z.toJSONSchema(scenarioSchema, { io: 'input', unrepresentable: 'any' }) as Record<
    string,
    unknown
  >;
  const { $schema, ...rest } = generated;
  return {
    $schema,
    $id: `https://dithercav.invalid/schema/scenario-${TOOL_VERSION}.json`,
    title: 'dithercav scenario',
    description:
      'A laser with an external cavity whose return mirror is dithered; quantities are SI numbers or strings with units.',
    ...rest,
  };
}

/** Register `schema`: prints the JSON Schema, pretty, to stdout; exit 0. */
export function registerSchema(program: Command, _ctx: CommandContext): void {
  program
    .command('schema')
    .description('print the JSON Schema of the scenario format (for editors)')
    .action(() => {
      process.stdout.write(`${JSON.stringify(scenarioJsonSchema(), null, 2)}\n`);
    });
}
