/**
 * Bad input is an exception at the edge with an exit code (2); a numerical failure is data.
 * Each problem names the file, the line where the parser knows it, the key path and what
 * was expected against what was found.
 */

export interface InputProblem {
  /** dot path of the key, e.g. "laser.output_coupler.reflectivity" ("" for the whole file) */
  path: string;
  /** "expected ..., found ..." */
  message: string;
  /** 1-based line and column in the file, where known */
  line?: number;
  column?: number;
}

/** The text of anything thrown: an Error's message (its name when the message is empty), else String(err). */
export function errorText(err: unknown): string {
  return err instanceof Error ? err.message || err.name : String(err);
}

/** One or more problems with a scenario file or the command line; exit code 2. */
export class InputError extends Error {
  readonly exitCode = 2;
  constructor(
    readonly file: string | null,
    readonly problems: InputProblem[],
  ) {
    super(formatProblems(file, problems));
    this.name = 'InputError';
  }
}

/** "demo.yaml:12:5: laser.output_coupler.reflectivity: expected ..., found 1.2" one per line. */
export function formatProblems(file: string | null, problems: InputProblem[]): string {
  return problems
    .map((p) => {
      const where = [
        file ?? '',
        p.line !== undefined ? String(p.line) : '',
        p.line !== undefined && p.column !== undefined ? String(p.column) : '',
      ]
        .filter((s) => s !== '')
        .join(':');
      const key = p.path === '' ? '' : `${p.path}: `;
      return `${where === '' ? '' : `${where}: `}${key}${p.message}`;
    })
    .join('\n');
}
