/**
 * The scenario as a table of key paths and values with units. The unit of each key is
 * read from the scenario schema's quantity kinds (KIND_META), so the report and the
 * schema cannot disagree; values in summary.json are already SI.
 */
import { z } from 'zod';
import { KIND_META, scenarioSchema } from '../scenario/schema';
import { QUANTITY_KINDS, QuantityKind } from '../scenario/units';
import { fmtNum, fmtSI } from './format';

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

export interface ScenarioRow {
  /** dot path, "laser.gain.pump_ratio"; list items as "sweep.axes[0].key" */
  path: string;
  /** the value with its unit, as shown */
  text: string;
}

function formatLeaf(kindPath: string, v: unknown): string {
  if (v === null || v === undefined) return 'not set';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v === 'string') return v;
  if (typeof v === 'number') {
    const kind = scenarioQuantityKinds().get(kindPath);
    const unit = kind ? QUANTITY_KINDS[kind] : '';
    if (unit === '' || !Number.isFinite(v)) return fmtNum(v, 6);
    return fmtSI(v, unit, 6);
  }
  return JSON.stringify(v);
}

/**
 * Flatten a normalised (SI) scenario into rows of path and formatted value, in the
 * order of the object. Units come from scenarioQuantityKinds(); keys the schema does
 * not know are shown as plain numbers. Returns [] for a value that is not an object.
 */
export function scenarioRows(scenario: unknown): ScenarioRow[] {
  const rows: ScenarioRow[] = [];
  const visit = (v: unknown, path: string, kindPath: string): void => {
    if (Array.isArray(v)) {
      if (v.every((x) => typeof x !== 'object' || x === null)) {
        rows.push({ path, text: v.map((x) => formatLeaf(`${kindPath}[]`, x)).join(', ') });
        return;
      }
      v.forEach((x, i) => visit(x, `${path}[${i}]`, `${kindPath}[]`));
      return;
    }
    if (v !== null && typeof v === 'object') {
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
        visit(x, path === '' ? k : `${path}.${k}`, kindPath === '' ? k : `${kindPath}.${k}`);
      }
      return;
    }
    rows.push({ path, text: formatLeaf(kindPath, v) });
  };
  if (scenario !== null && typeof scenario === 'object' && !Array.isArray(scenario)) visit(scenario, '', '');
  return rows;
}
