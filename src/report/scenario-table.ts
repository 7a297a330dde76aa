/**
 * The scenario as a table of key paths and values with units. The unit of each key is
 * read from the scenario schema's quantity kinds (KIND_META), so the report and the
 * schema cannot disagree; values in summary.json are already SI.
 */
import { QUANTITY_KINDS } from '../scenario/units';
import { scenarioQuantityKinds } from '../scenario/kinds';
import { fmtNum, fmtSI } from './format';

/** Map from scenario key path to its quantity kind (moved to the scenario room; kept here for callers). */
export { scenarioQuantityKinds } from '../scenario/kinds';

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
