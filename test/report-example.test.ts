import { cpSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { rebuildReport } from '../src/report';
import { recommendOperatingPoint, reachableMask } from '../src/analysis/operating-point';
import { scenarioSchema } from '../src/scenario/schema';
import type { SweepMap } from '../src/results/map';

// The one committed example (reports/example/demo-sweep): it must stay what the current
// code makes of its own saved map, and its report must build from it with no simulation.
const EXAMPLE = join(__dirname, '..', 'reports', 'example', 'demo-sweep');
const tmp = scratchDir('example');

describe('committed example sweep', () => {
  const map = JSON.parse(readFileSync(join(EXAMPLE, 'map.json'), 'utf8')) as SweepMap;
  const header = JSON.parse(readFileSync(join(EXAMPLE, 'sweep.json'), 'utf8'));
  const scenario = scenarioSchema.parse(header.scenario);

  it('holds the reachable region and recommended point that the current rule gives for its classes', () => {
    expect(map.scenario_sha256).toBe(header.scenario_sha256);
    expect(map.reachable).toEqual(reachableMask(map, scenario));
    const choice = recommendOperatingPoint(map, scenario);
    expect(map.recommended).toEqual(choice.recommended);
    expect(map.recommended_reason).toBe(choice.recommended_reason);
  });

  it('its stored classes obey the class thresholds of its own scenario', () => {
    // A change of the class rule without a regenerated example shows here.
    const a = scenario.analysis;
    const m = map.metrics;
    let decoupled = 0;
    map.classes.forEach((c, i) => {
      if (c !== 'decoupled') return;
      decoupled++;
      expect(m.incoherent_fraction[i]!, `point ${i}`).toBeGreaterThanOrEqual(a.min_incoherent_fraction);
      expect(m.gain_over_static[i]!, `point ${i}`).toBeGreaterThanOrEqual(a.min_gain_over_static);
      expect(m.ripple_rel[i]!, `point ${i}`).toBeLessThanOrEqual(a.ripple_limit);
      expect(m.hops_per_period[i]!, `point ${i}`).toBeLessThanOrEqual(a.max_hops_per_period);
    });
    expect(decoupled).toBeGreaterThan(0);
  });

  it('rebuilds its report from the saved files alone', () => {
    const dir = join(tmp, 'demo-sweep');
    cpSync(EXAMPLE, dir, { recursive: true });
    const r = rebuildReport(dir);
    expect(r.kind).toBe('sweep');
    const html = readFileSync(r.written[0], 'utf8');
    expect(statSync(r.written[0]).size).toBeGreaterThan(1e6); // the plotting library is inlined
    expect(html).toContain('recommended operating point');
    expect(html).toContain('reachable by the actuator');
    expect(html).toMatch(/IEC 60825/);
  });
});
