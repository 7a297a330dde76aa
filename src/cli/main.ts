/**
 * The `dithercav` command line. Each command lives in its own module under ./commands and
 * registers itself here. Exit codes: 0 success, 1 a run failed, 2 bad input.
 */
import { Command, CommanderError } from 'commander';
import { errorText, InputError } from '../scenario/errors';
import { TOOL_VERSION } from '../version';
import { registerCheck } from './commands/check';
import { registerSchema } from './commands/schema';
import { registerRun } from './commands/run';
import { registerSweep } from './commands/sweep';
import { registerBatch } from './commands/batch';
import { registerMerge } from './commands/merge';
import { registerReport } from './commands/report';
import { registerActuator } from './commands/actuator';
import { registerCompare } from './commands/compare';
import { registerYield } from './commands/yield';

/** Exit status a command reports back to main. */
export type ExitCode = 0 | 1 | 2;

export interface CommandContext {
  /** set by a command to report its exit status */
  setExit(code: ExitCode): void;
}

export function buildProgram(ctx: CommandContext): Command {
  const program = new Command();
  program
    .name('dithercav')
    .description('Dithered external-cavity enhancement simulator')
    .version(TOOL_VERSION)
    .exitOverride()
    .showHelpAfterError()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  registerCheck(program, ctx);
  registerRun(program, ctx);
  registerSweep(program, ctx);
  registerBatch(program, ctx);
  registerMerge(program, ctx);
  registerReport(program, ctx);
  registerActuator(program, ctx);
  registerCompare(program, ctx);
  registerYield(program, ctx);
  registerSchema(program, ctx);
  for (const c of program.commands) c.exitOverride();
  return program;
}

/** Run the CLI; resolves to the process exit code. Never lets a stack trace reach the user. */
export async function main(argv: string[]): Promise<number> {
  let code: ExitCode = 0;
  const ctx: CommandContext = {
    setExit: (c) => {
      if (c > code) code = c;
    },
  };
  const program = buildProgram(ctx);
  try {
    await program.parseAsync(argv);
    return code;
  } catch (err) {
    if (err instanceof CommanderError) {
      if (
        err.code === 'commander.helpDisplayed' ||
        err.code === 'commander.version' ||
        err.code === 'commander.help'
      )
        return 0;
      return 2;
    }
    if (err instanceof InputError) {
      process.stderr.write(`dithercav: bad input\n${err.message}\n`);
      return 2;
    }
    process.stderr.write(`dithercav: failed: ${errorText(err)}\n`);
    return 1;
  }
}
