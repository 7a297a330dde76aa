/**
 * The canonical form of a scenario: the JSON written into result files and hashed to
 * identify a run. A normalised scenario parses back to the same values.
 */
import { createHash } from 'node:crypto';
import type { Scenario } from './schema';

/**
 * A plain JSON copy of a validated scenario: keys sorted at every level, undefined
 * entries dropped, an infinite radius of curvature written as "flat" (the schema's
 * spelling of it), so that `scenarioSchema.parse(normaliseScenarioForJson(s))` equals s.
 * Any other non-finite number cannot come out of the schema and is refused.
 */
export function normaliseScenarioForJson(s: Scenario): Record<string, unknown> {
  return normalise(s, '') as Record<string, unknown>;
}

/**
 * Keys added after result files existed, left out of the canonical form while they hold
 * their default (which changes nothing), so that the hash of an earlier scenario, and with
 * it `--resume` into its folder, stays the same. Parsing fills the default back in.
 */
const OMITTED_AT_DEFAULT: Record<string, number> = {
  'external.return_mirror.tilt': 0,
  'external.return_mirror.decenter': 0,
  'actuator.tilt_per_stroke': 0,
};

function normalise(v: unknown, where: string): unknown {
  if (typeof v === 'number') {
    if (v === Infinity) return 'flat';
    if (!Number.isFinite(v)) throw new Error(`scenario value at ${where} is ${v}, which has no JSON form`);
    return v;
  }
  if (Array.isArray(v)) return v.map((x, i) => normalise(x, `${where}[${i}]`));
  if (v !== null && typeof v === 'object') {
    const out: Record<string, unknown> = {};
    for (const k of Object.keys(v).sort()) {
      const x = (v as Record<string, unknown>)[k];
      if (x === undefined) continue;
      const path = where === '' ? k : `${where}.${k}`;
      if (path in OMITTED_AT_DEFAULT && x === OMITTED_AT_DEFAULT[path]) continue;
      out[k] = normalise(x, where === '' ? k : `${where}.${k}`);
    }
    return out;
  }
  return v;
}

/** Hex SHA-256 of the canonical JSON of the normalised scenario (sorted keys, no spaces). */
export function scenarioSha256(s: Scenario): string {
  return createHash('sha256')
    .update(JSON.stringify(normaliseScenarioForJson(s)))
    .digest('hex');
}
