/**
 * Reading a scenario file: YAML or JSON text -> validated SI scenario, with every problem
 * of the file reported at once with its line and column.
 */
import { readFileSync } from 'node:fs';
import { isMap, isPair, isScalar, isSeq, LineCounter, Node, parseDocument, Document } from 'yaml';
import { InputError, InputProblem } from './errors';
import { Scenario, scenarioSchema } from './schema';
import { formatKeyPath, parseKeyPath, PathSegment } from './keypath';
import { issuesToProblems } from './issues';
import { axisKeyProblem, validateScenario } from './validate';
import { scenarioSha256 } from './canonical';
import { keyUnit } from './kinds';

export { normaliseScenarioForJson, scenarioSha256 } from './canonical';

/** A loaded scenario with what it came from. */
export interface LoadedScenario {
  scenario: Scenario;
  /** the parsed file before validation (units still as strings) */
  raw: unknown;
  text: string;
  /** scenarioSha256 of the validated scenario */
  sha256: string;
  /** advice from validateScenario that does not refuse the file */
  warnings: InputProblem[];
}

interface Position {
  line: number;
  column: number;
}

/**
 * The position of the node at `path`: the value node (or the key node when `atKey`);
 * when the path does not exist in the file (a missing key), the key of the deepest
 * mapping entry that does, so "missing wavelength" points at the `laser:` line.
 */
function locate(
  doc: Document,
  lc: LineCounter,
  path: readonly PathSegment[],
  atKey: boolean,
): Position | undefined {
  let node: unknown = doc.contents;
  let lastKey: Node | null = null;
  let lastValue: Node | null = null;
  for (let i = 0; i < path.length; i++) {
    const seg = path[i];
    let keyNode: Node | null = null;
    let next: unknown;
    if (isMap(node)) {
      const pair = node.items.find((p) => isPair(p) && (isScalar(p.key) ? p.key.value : p.key) === seg);
      if (pair) {
        keyNode = isScalar(pair.key) ? pair.key : null;
        next = pair.value;
        if (next === null && i === path.length - 1) {
          // `key:` with nothing after it: the key is the place
          const at = keyNode?.range?.[0];
          return at !== undefined ? pos(lc, at) : undefined;
        }
      }
    } else if (isSeq(node) && typeof seg === 'number') {
      next = node.items[seg];
    }
    if (next === undefined) break;
    if (i === path.length - 1 && atKey && keyNode?.range) return pos(lc, keyNode.range[0]);
    if (keyNode) lastKey = keyNode;
    lastValue = next as Node;
    node = next;
    if (i === path.length - 1) {
      const r = (next as Node).range;
      return r ? pos(lc, r[0]) : undefined;
    }
  }
  const fallback = lastKey ?? lastValue;
  if (fallback?.range) return pos(lc, fallback.range[0]);
  if (path.length > 0 && (doc.contents as Node | null)?.range) return undefined;
  return undefined;
}

function pos(lc: LineCounter, offset: number): Position {
  const p = lc.linePos(offset);
  return { line: p.line, column: p.col };
}

function withPosition(problem: { path: string; message: string }, where: Position | undefined): InputProblem {
  return where ? { ...problem, line: where.line, column: where.column } : problem;
}

/**
 * For a YAML error about an unclosed flow collection or quoted string, the offset of the
 * opening bracket or quote before `at` that is never closed; null for other errors.
 */
export function unclosedOpening(
  text: string,
  message: string,
  at: number | undefined,
): { offset: number; what: string; closer: string } | null {
  if (at === undefined) return null;
  const m = /end with a ([\]}])/.exec(message);
  if (m) {
    const [open, close] = m[1] === ']' ? ['[', ']'] : ['{', '}'];
    let depth = 0;
    for (let i = Math.min(at, text.length) - 1; i >= 0; i--) {
      if (text[i] === close) depth++;
      else if (text[i] === open) {
        if (depth === 0)
          return { offset: i, what: open === '[' ? "'[' (a list)" : "'{' (a mapping)", closer: close };
        depth--;
      }
    }
    return null;
  }
  const q = /Missing closing (["'])quote/.exec(message);
  if (q) {
    const i = text.lastIndexOf(q[1], Math.min(at, text.length) - 1);
    return i >= 0 ? { offset: i, what: `${q[1]} (a quoted text)`, closer: q[1] } : null;
  }
  return null;
}

/** "Implicit keys need to be on a single line at line 3, column 1:\n..." -> its first clause. */
function yamlMessage(message: string): string {
  const first = message.split('\n')[0];
  return first.replace(/ at line \d+, column \d+:?\s*$/, '');
}

/**
 * Parse and validate scenario text. `fileLabel` names the source in messages. JSON is
 * read as YAML (YAML 1.2 contains JSON), which gives JSON files line numbers too; a file
 * named *.json is also held to strict JSON.
 * Throws InputError listing every syntax, schema and physical-sanity error found.
 */
export function parseScenarioText(text: string, fileLabel: string): LoadedScenario {
  const lc = new LineCounter();
  const doc = parseDocument(text, { lineCounter: lc, prettyErrors: true, uniqueKeys: true });
  const problems: InputProblem[] = [];
  for (const e of doc.errors) {
    const at = e.linePos?.[0];
    // An unclosed bracket or quote is noticed where the parser gives up, often lines later
    // (past blank and comment lines); the mistake is at the opening, so point there.
    const opening = unclosedOpening(text, e.message, e.pos?.[0]);
    if (opening !== null) {
      const o = pos(lc, opening.offset);
      problems.push({
        path: '',
        message: `YAML syntax: this ${opening.what} is never closed (the parser noticed at line ${at?.line ?? '?'}); add the closing ${opening.closer}`,
        line: o.line,
        column: o.column,
      });
      continue;
    }
    problems.push({
      path: '',
      message: `YAML syntax: ${yamlMessage(e.message)}`,
      line: at?.line,
      column: at?.col,
    });
  }
  if (problems.length === 0 && /\.json$/i.test(fileLabel)) {
    try {
      JSON.parse(text);
    } catch (err) {
      const m = /position (\d+)/.exec(String((err as Error).message));
      const at = m ? pos(lc, Number(m[1])) : undefined;
      problems.push(
        withPosition({ path: '', message: `JSON syntax: ${(err as Error).message.split('\n')[0]}` }, at),
      );
    }
  }
  if (problems.length > 0) throw new InputError(fileLabel, problems);

  const raw: unknown = doc.toJS({ maxAliasCount: 100 });
  if (raw === null || raw === undefined || typeof raw !== 'object' || Array.isArray(raw)) {
    const found =
      raw === null || raw === undefined
        ? 'nothing'
        : Array.isArray(raw)
          ? 'a list'
          : `${typeof raw} ${JSON.stringify(raw)}`;
    throw new InputError(fileLabel, [
      {
        path: '',
        message: `expected a mapping with keys name, laser, ..., found ${found}`,
        line: 1,
        column: 1,
      },
    ]);
  }
  const parsed = scenarioSchema.safeParse(raw, { reportInput: true });
  if (!parsed.success) {
    for (const p of issuesToProblems(parsed.error.issues)) {
      problems.push(
        withPosition(
          bareNumberHint({ path: formatKeyPath(p.path), message: p.message }, raw),
          locate(doc, lc, p.path, p.atKey),
        ),
      );
    }
    // Axis keys are checked now too, so one pass shows every problem a reader can fix.
    const axes = (raw as { sweep?: { axes?: unknown } }).sweep?.axes;
    if (Array.isArray(axes)) {
      axes.forEach((a: unknown, i) => {
        const key = (a as { key?: unknown } | null)?.key;
        const kp = typeof key === 'string' && key !== '' ? axisKeyProblem(key, i) : null;
        if (kp && !problems.some((q) => q.path === kp.path))
          problems.push(withPosition(kp, locate(doc, lc, ['sweep', 'axes', i, 'key'], false)));
      });
    }
    throw new InputError(fileLabel, sortProblems(problems));
  }
  const checks = validateScenario(parsed.data);
  const place = (p: InputProblem): InputProblem => {
    const path = parseKeyPath(p.path);
    return path ? withPosition(bareNumberHint(p, raw), locate(doc, lc, path, false)) : p;
  };
  if (checks.errors.length > 0) throw new InputError(fileLabel, sortProblems(checks.errors.map(place)));
  return {
    scenario: parsed.data,
    raw,
    text,
    sha256: scenarioSha256(parsed.data),
    warnings: checks.warnings.map(place),
  };
}

/**
 * A problem about a quantity written as a bare number gets a hint that bare numbers are
 * SI ("amplitude: 600" is 600 m, not 600 nm), with the value written with a unit.
 */
function bareNumberHint(p: InputProblem, raw: unknown): InputProblem {
  const path = parseKeyPath(p.path);
  if (!path) return p;
  let v: unknown = raw;
  for (const k of path)
    v = v !== null && typeof v === 'object' ? (v as Record<string | number, unknown>)[k] : undefined;
  const unit = keyUnit(p.path.replace(/\[\d+\]/g, '[]'));
  if (typeof v !== 'number' || unit === '' || v === 0) return p;
  return {
    ...p,
    message: `${p.message} (a number without a unit is taken in SI units: ${v} means ${v} ${unit}; to mean another unit write it, e.g. '${v} ${unit === 'm' ? 'nm' : unit === 's' ? 'us' : unit === 'Hz' ? 'kHz' : `m${unit}`}')`,
  };
}

/** Problems in file order (those without a line last), so a reader can work down the file. */
function sortProblems(problems: InputProblem[]): InputProblem[] {
  return problems
    .map((p, i) => ({ p, i }))
    .sort(
      (a, b) =>
        (a.p.line ?? Infinity) - (b.p.line ?? Infinity) || (a.p.column ?? 0) - (b.p.column ?? 0) || a.i - b.i,
    )
    .map((x) => x.p);
}

/**
 * Read and validate a scenario file (YAML or JSON). Returns the SI scenario, the raw
 * parsed value, the text and the scenario's SHA-256. Throws InputError naming the file
 * for an unreadable file and for every problem in it.
 */
export function loadScenarioFile(path: string): LoadedScenario {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    const why =
      code === 'ENOENT'
        ? 'no such file'
        : code === 'EISDIR'
          ? 'a directory, not a file'
          : (err as Error).message;
    throw new InputError(path, [{ path: '', message: `expected a readable scenario file, found ${why}` }]);
  }
  return parseScenarioText(text, path);
}
