/**
 * The five headline answers of a run (issue 15 item 3), in their order, with the gap power's
 * standard error when the summary has one and "not computed" when it has none; and the
 * number formats the run report fixed (a mass prefixed on the gram, a round-off zero).
 */
import { describe, expect, it } from 'vitest';
import { fmtSI, runHeadline, snapRoundOff, stderrOf, withStderr } from '../src/report';
import type { RunSummary } from '../src/results/summary';
import { makeRunArtifacts } from './fixtures/report/make-fixtures';

describe('run headline', () => {
  const a = makeRunArtifacts({ actuator: true, interfaceMismatch: 0.01 });

  it('answers the five questions in the order an engineer asks them', () => {
    expect(runHeadline(a.summary).map((h) => h.id)).toEqual(['gap', 'steady', 'hops', 'actuator', 'can']);
  });

  it('gives the gap power over the laser’s own output, and says when no standard error was computed', () => {
    // the fixture's summary without its standard error (as a summary written before 0.2)
    const s = { ...a.summary, driven: { ...a.summary.driven!, external_mean_stderr_W: null } };
    const gap = runHeadline(s)[0];
    const ratio = s.driven!.external_mean_W / s.free_running.output_W;
    expect(gap.answer).toContain(`${Number(ratio.toPrecision(3))}x the laser's own output`);
    expect(gap.answer).toContain('standard error not computed');
  });

  it('shows the standard error, and its share of the ratio, when the summary carries one', () => {
    const s = structuredClone(a.summary) as RunSummary;
    const se = 0.02 * s.driven!.external_mean_W;
    (s.driven as unknown as Record<string, number>).external_mean_stderr_W = se;
    expect(stderrOf(s.driven, 'external_mean_W')).toBe(se);
    const gap = runHeadline(s)[0];
    expect(gap.answer).toContain(`± ${fmtSI(se, 'W', 2)} (standard error)`);
    expect(gap.answer).toContain(`± ${Number((se / s.free_running.output_W).toPrecision(2))}x`);
  });

  it('judges the ripple and the hops against the scenario’s own limits', () => {
    const s = structuredClone(a.summary) as RunSummary;
    const limit = (s.scenario as { analysis: { ripple_limit: number } }).analysis.ripple_limit;
    s.driven!.ripple_rel = 2 * limit;
    expect(runHeadline(s)[1].ok).toBe(false);
    s.driven!.ripple_rel = 0.5 * limit;
    expect(runHeadline(s)[1].ok).toBe(true);
  });

  it('says the actuator is not checked when the scenario has none', () => {
    const s = structuredClone(a.summary) as RunSummary;
    s.actuator = null;
    const can = runHeadline(s)[4];
    expect(can.answer).toMatch(/^not checked/);
    expect(can.ok).toBeNull();
  });
});

describe('report number formats', () => {
  it('prefixes a mass on the gram: 2e-5 kg is 20 mg, never "20 ukg"', () => {
    expect(fmtSI(2e-5, 'kg')).toBe('20 mg');
    expect(fmtSI(1.5, 'kg')).toBe('1.5 kg');
  });

  it('shows a position that is zero up to round-off as 0, and a real one as it is', () => {
    expect(snapRoundOff(2.7755575615628914e-17, 0.05)).toBe(0);
    expect(snapRoundOff(1e-6, 0.05)).toBe(1e-6);
    expect(withStderr(null, null, 'W')).toBe('not computed');
  });
});
