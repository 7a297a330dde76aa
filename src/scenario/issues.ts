/**
 * Zod's issues turned into the project's problems: a key path, one sentence "expected ...,
 * found ..." and, for unknown keys, the nearest valid key. Lines are added by the loader,
 * which knows the file; this module knows only the schema.
 */
import type { z } from 'zod';
import { describeFound } from './units';
import type { PathSegment } from './keypath';
import { nearestKey, validKeysAt } from './shape';

/** A problem still carrying its path as segments, so the loader can find the YAML node. */
export interface LocatedProblem {
  path: PathSegment[];
  message: string;
  /** true when the problem is the key itself (unknown key): point at the key, not its value */
  atKey: boolean;
}

type Issue = z.core.$ZodIssue & { input?: unknown };

const TYPE_NAMES: Record<string, string> = {
  object: 'a mapping',
  array: 'a list',
  string: 'text',
  number: 'a number',
  boolean: 'true or false',
};

/** The "expected X" half of a message, for joining the branches of a union. */
function expectation(issue: Issue): string {
  const m = /^expected (.*?)(, found .*)?$/s.exec(issue.message);
  if (m) return m[1];
  if (issue.code === 'invalid_value')
    return issue.values.map((v) => (typeof v === 'string' ? `'${v}'` : String(v))).join(' or ');
  if (issue.code === 'invalid_type') return TYPE_NAMES[issue.expected] ?? issue.expected;
  return issue.message;
}

/** How badly a union branch missed: a wrong type at its root is a miss, a failed check a near hit. */
function branchScore(errors: Issue[]): number {
  let score = 0;
  for (const e of errors) {
    if (e.path.length === 0 && (e.code === 'invalid_type' || e.code === 'invalid_value')) score += 1000;
    else if (e.code === 'unrecognized_keys') score += e.keys.length;
    else score += 1;
  }
  return score;
}

function convert(issue: Issue, base: PathSegment[], input: unknown, out: LocatedProblem[]): void {
  const path = [...base, ...(issue.path as PathSegment[])];
  const found = 'input' in issue ? issue.input : input;
  switch (issue.code) {
    case 'unrecognized_keys': {
      const valid = validKeysAt(path);
      for (const key of issue.keys) {
        const near = nearestKey(key, valid);
        const hint = near
          ? ` (did you mean '${near}'?)`
          : valid.length > 0
            ? ` (valid keys here: ${valid.join(', ')})`
            : '';
        out.push({ path: [...path, key], message: `unknown key '${key}'${hint}`, atKey: true });
      }
      return;
    }
    case 'invalid_union': {
      if (!issue.message.startsWith('expected') || !/, found /.test(issue.message)) {
        const branches = issue.errors as Issue[][];
        let best: Issue[] | null = null;
        let bestScore = Infinity;
        for (const b of branches) {
          const s = branchScore(b);
          if (s < bestScore) {
            bestScore = s;
            best = b;
          }
        }
        if (best && bestScore < 1000) {
          for (const e of best) convert(e, path, found, out);
          return;
        }
        const wanted = [
          ...new Set(branches.map((b) => (b[0] ? expectation(b[0]) : '')).filter((s) => s !== '')),
        ];
        const head = issue.message.startsWith('expected') ? issue.message : `expected ${wanted.join(' or ')}`;
        out.push({ path, message: `${head}, found ${describeFound(found)}`, atKey: false });
        return;
      }
      out.push({ path, message: issue.message, atKey: false });
      return;
    }
    case 'invalid_type': {
      if (issue.message.startsWith('expected')) {
        out.push({ path, message: issue.message, atKey: false });
        return;
      }
      const what = TYPE_NAMES[issue.expected] ?? issue.expected;
      out.push({ path, message: `expected ${what}, found ${describeFound(found)}`, atKey: false });
      return;
    }
    case 'invalid_value': {
      if (issue.message.startsWith('expected')) {
        out.push({ path, message: issue.message, atKey: false });
        return;
      }
      out.push({
        path,
        message: `expected ${expectation(issue)}, found ${describeFound(found)}`,
        atKey: false,
      });
      return;
    }
    default: {
      const msg = issue.message.startsWith('expected')
        ? issue.message
        : `expected a valid value (${issue.message}), found ${describeFound(found)}`;
      out.push({ path, message: msg, atKey: false });
    }
  }
}

const SUM_RULE = 'expected reflectivity + transmission + loss';

/**
 * Problems for every issue of a failed parse, in the order zod found them. A mirror's
 * "R + T + loss <= 1" complaint is dropped when another value of the same mirror is
 * already wrong (the sum is then computed from a refused value and only confuses).
 */
export function issuesToProblems(issues: readonly z.core.$ZodIssue[]): LocatedProblem[] {
  const out: LocatedProblem[] = [];
  for (const issue of issues) convert(issue as Issue, [], undefined, out);
  return out.filter((p) => {
    if (!p.message.startsWith(SUM_RULE)) return true;
    const parent = p.path.slice(0, -1);
    return !out.some(
      (q) =>
        q !== p &&
        !q.message.startsWith(SUM_RULE) &&
        q.path.length === parent.length + 1 &&
        parent.every((s, i) => q.path[i] === s),
    );
  });
}
