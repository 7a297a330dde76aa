/**
 * Walking the scenario schema itself: which keys exist at a path, which key paths hold
 * numbers (sweep axes, overrides) and the nearest valid key to a misspelt one. The schema
 * stays the one source of truth; nothing here lists keys by hand.
 */
import { z } from 'zod';
import { distance } from 'fastest-levenshtein';
import { KIND_META, scenarioSchema } from './schema';
import type { PathSegment } from './keypath';
import { formatKeyPath } from './keypath';

// zod 4 keeps each schema's definition on `_zod.def`; only the fields read here are typed.
interface Def {
  type: string;
  innerType?: z.ZodType;
  in?: z.ZodType;
  shape?: Record<string, z.ZodType>;
  options?: z.ZodType[];
  element?: z.ZodType;
}
function defOf(s: z.ZodType): Def {
  return (s as unknown as { _zod: { def: Def } })._zod.def;
}

const WRAPPERS = new Set(['optional', 'default', 'prefault', 'nullable', 'readonly', 'nonoptional', 'catch']);

/** Strip optional/default wrappers and transforms down to the schema that checks the input. */
function unwrap(s: z.ZodType): z.ZodType {
  let cur = s;
  for (let i = 0; i < 32; i++) {
    const d = defOf(cur);
    if (WRAPPERS.has(d.type) && d.innerType) cur = d.innerType;
    else if (d.type === 'pipe' && d.in) cur = d.in;
    else break;
  }
  return cur;
}

/** The object schemas a value at this point may be (unions of objects give several). */
function objectOptions(s: z.ZodType): z.ZodType[] {
  const u = unwrap(s);
  const d = defOf(u);
  if (d.type === 'object') return [u];
  if (d.type === 'union' && d.options) return d.options.flatMap(objectOptions);
  return [];
}

/**
 * The schemas that can sit at a path (several where a union branches), or [] if the
 * path leads nowhere in the schema. List indices step into array elements.
 */
export function schemasAt(path: readonly PathSegment[]): z.ZodType[] {
  let current: z.ZodType[] = [scenarioSchema];
  for (const seg of path) {
    const next: z.ZodType[] = [];
    for (const s of current) {
      const u = unwrap(s);
      const d = defOf(u);
      if (typeof seg === 'number') {
        if (d.type === 'array' && d.element) next.push(d.element);
      } else {
        for (const o of objectOptions(u)) {
          const child = defOf(o).shape?.[seg];
          if (child) next.push(child);
        }
      }
    }
    current = next;
    if (current.length === 0) break;
  }
  return current;
}

/** Valid keys of the mapping at `path` (the union of all object branches), sorted. */
export function validKeysAt(path: readonly PathSegment[]): string[] {
  const keys = new Set<string>();
  for (const s of schemasAt(path))
    for (const o of objectOptions(s)) for (const k of Object.keys(defOf(o).shape ?? {})) keys.add(k);
  return [...keys].sort();
}

/** True if a value of this schema may be a number (a quantity, a bounded number, 'auto' or a number). */
function acceptsNumber(s: z.ZodType): boolean {
  let cur: z.ZodType = s;
  for (let i = 0; i < 32; i++) {
    const meta = z.globalRegistry.get(cur) as Record<string, unknown> | undefined;
    if (meta && meta[KIND_META] !== undefined) return true;
    const d = defOf(cur);
    if (d.type === 'number') return true;
    if (d.type === 'union' && d.options) return d.options.some(acceptsNumber);
    if (WRAPPERS.has(d.type) && d.innerType) cur = d.innerType;
    else if (d.type === 'pipe' && d.in) cur = d.in;
    else return false;
  }
  return false;
}

let numericCache: string[] | null = null;

/**
 * Every key path of the scenario schema whose value may be a number (SI quantity, plain
 * number, or a number-or-'auto' choice), in schema order: the keys a sweep axis or an
 * override may set. The `sweep` and `tolerances` sections are left out (an axis cannot
 * sweep axes, nor a tolerance vary tolerances).
 */
export function numericKeyPaths(): string[] {
  if (numericCache) return numericCache.slice();
  const out: string[] = [];
  const walk = (s: z.ZodType, path: string[]) => {
    const objs = objectOptions(s);
    if (objs.length > 0) {
      for (const o of objs)
        for (const [k, child] of Object.entries(defOf(o).shape ?? {})) {
          if (path.length === 0 && (k === 'sweep' || k === 'tolerances')) continue;
          walk(child, [...path, k]);
        }
      return;
    }
    if (acceptsNumber(s)) out.push(formatKeyPath(path));
  };
  walk(scenarioSchema, []);
  numericCache = [...new Set(out)];
  return numericCache.slice();
}

/**
 * Every key path of the schema that holds a value (not a mapping), in schema order,
 * sweep axes written as `sweep.axes[].key`. Used to check the README's key table.
 */
export function allKeyPaths(): string[] {
  const out: string[] = [];
  const walk = (s: z.ZodType, path: string) => {
    const u = unwrap(s);
    const d = defOf(u);
    if (d.type === 'array' && d.element && objectOptions(d.element).length > 0) {
      walk(d.element, `${path}[]`);
      return;
    }
    const objs = objectOptions(u);
    if (objs.length > 0) {
      for (const o of objs)
        for (const [k, child] of Object.entries(defOf(o).shape ?? {}))
          walk(child, path === '' ? k : `${path}.${k}`);
      return;
    }
    out.push(path);
  };
  walk(scenarioSchema, '');
  return [...new Set(out)];
}

/**
 * The candidate closest to `word` by Levenshtein edit distance, or null when even the
 * closest needs more edits than a third of the longer word (a guess that would mislead).
 */
export function nearestKey(word: string, candidates: readonly string[]): string | null {
  let best: string | null = null;
  let bestD = Infinity;
  for (const c of candidates) {
    const d = distance(word.toLowerCase(), c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  if (best === null) return null;
  // Compare the last segment too, so "drive.amplitud" still finds "drive.amplitude".
  const limit = Math.max(2, Math.ceil(Math.max(word.length, best.length) / 3));
  return bestD <= limit ? best : null;
}

/**
 * The quantity kind (units) of the numeric value at a key path, from the schema's
 * metadata ('dimensionless' for plain numbers), or null when the path holds no number.
 */
export function quantityKindAt(path: readonly PathSegment[]): string | null {
  for (const s of schemasAt(path)) {
    let cur: z.ZodType = s;
    const stack: z.ZodType[] = [cur];
    while (stack.length > 0) {
      cur = stack.pop()!;
      const meta = z.globalRegistry.get(cur) as Record<string, unknown> | undefined;
      if (meta && typeof meta[KIND_META] === 'string') return meta[KIND_META] as string;
      const d = defOf(cur);
      if (d.type === 'number') return 'dimensionless';
      if (d.type === 'union' && d.options) stack.push(...d.options);
      else if (WRAPPERS.has(d.type) && d.innerType) stack.push(d.innerType);
      else if (d.type === 'pipe' && d.in) stack.push(d.in);
    }
  }
  return null;
}
