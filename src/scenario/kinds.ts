/**
 * The quantity kind of every scenario key path, read from the schema's KIND_META (so the
 * report, the CSV files and the schema cannot disagree on a unit), and the SI unit of a
 * key path.
 */
import { z } from 'zod';
import { KIND_META, scenarioSchema } from './schema';
import { QUANTITY_KINDS, QuantityKind } from './units';

let kindsCache: Map<string, QuantityKind> | null = null;

/* zod 4 keeps a schema's definition under _zod.def; only the node types the scenario
   schema uses are walked. Arrays add "[]" to the path. */
function walk(s: unknown, path: string, out: Map<string, QuantityKind>): void {
  const schema = s as { _zod?: { def?: Record<string, unknown> } };
  const def = schema._zod?.def;
  if (!def) return;
  const meta = z.globalRegistry.get(s as z.ZodType) as Record<string, unknown> | undefined;
  const kind = meta?.[KIND_META];
  if (typeof kind === 'string' && kind in QUANTITY_KINDS && !out.has(path))
    out.set(path, kind as QuantityKind);
  switch (def.type) {
    case 'object':
      for (const [k, v] of Object.entries(def.shape as Record<string, unknown>))
        walk(v, path === '' ? k : `${path}.${k}`, out);
      break;
    case 'default':
    case 'prefault':
    case 'optional':
    case 'nullable':
      walk(def.innerType, path, out);
      break;
    case 'union':
      for (const o of def.options as unknown[]) walk(o, path, out);
      break;
    case 'pipe':
      walk(def.in, path, out);
      break;
    case 'array':
      walk(def.element, `${path}[]`, out);
      break;
    default:
      break;
  }
}

/** Map from scenario key path ("laser.cavity_length") to its quantity kind, from the schema. */
export function scenarioQuantityKinds(): Map<string, QuantityKind> {
  if (!kindsCache) {
    kindsCache = new Map();
    walk(scenarioSchema, '', kindsCache);
  }
  return kindsCache;
}

/** The SI unit of a scenario key path ("drive.amplitude" -> "m"); "" when dimensionless or unknown. */
export function keyUnit(path: string): string {
  const kind = scenarioQuantityKinds().get(path);
  return kind ? QUANTITY_KINDS[kind] : '';
}
