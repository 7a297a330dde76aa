import { describe, expect, it } from 'vitest';
import { classifyRun, type ClassMetrics, type ClassThresholds } from '../src/analysis';

// The classes and their order are the project's own definition (MODEL.md section 4,
// CONTRACT.md `class`); the expectations below follow from it. // common practice, no source
const th: ClassThresholds = {
  lasing_power: 1e-6,
  max_hops_per_period: 0,
  min_gain_over_static: 1.1,
  min_incoherent_fraction: 0.3,
  ripple_limit: 0.1,
};
const good: ClassMetrics = {
  freeRunningIntracavity_W: 0.05,
  hopsPerPeriod: 0,
  gainOverStatic: 3,
  rippleRel: 0.04,
  incoherentFraction: 0.8,
};

describe('classifyRun', () => {
  it('a run passing every test is decoupled, and the reason lists the numbers', () => {
    const r = classifyRun(good, th);
    expect(r.class).toBe('decoupled');
    expect(r.reason).toContain('ripple 0.04 <= limit 0.1');
    expect(r.reason).toContain('gain over static 3 >= minimum 1.1');
  });

  it('no-lasing below the lasing power, not at it', () => {
    expect(classifyRun({ ...good, freeRunningIntracavity_W: 0.999e-6 }, th).class).toBe('no-lasing');
    expect(classifyRun({ ...good, freeRunningIntracavity_W: 1e-6 }, th).class).toBe('decoupled');
    expect(classifyRun({ ...good, freeRunningIntracavity_W: 0 }, th).reason).toBe(
      'free-running intracavity power 0 W < lasing threshold 1e-6 W',
    );
  });

  it('hopping above the hop limit, not at it', () => {
    const t2 = { ...th, max_hops_per_period: 0.5 };
    expect(classifyRun({ ...good, hopsPerPeriod: 0.51 }, t2).class).toBe('hopping');
    expect(classifyRun({ ...good, hopsPerPeriod: 0.5 }, t2).class).toBe('decoupled');
    expect(classifyRun({ ...good, hopsPerPeriod: 2 }, th).reason).toBe('hops per period 2 > limit 0');
  });

  it('no-gain below the minimum gain over static, not at it', () => {
    expect(classifyRun({ ...good, gainOverStatic: 1.099 }, th).class).toBe('no-gain');
    expect(classifyRun({ ...good, gainOverStatic: 1.1 }, th).class).toBe('decoupled');
    expect(classifyRun({ ...good, gainOverStatic: 0.5 }, th).reason).toBe(
      'gain over static 0.5 < minimum 1.1',
    );
  });

  it('no-gain below the minimum fraction of the phase-averaged level, not at it, even with gain over static', () => {
    // A decoupled laser fills the gap with the phase average of the Airy response
    // (MODEL.md section 4); a run far below it is not decoupled whatever its gain over static.
    expect(classifyRun({ ...good, incoherentFraction: 0.2999 }, th).class).toBe('no-gain');
    expect(classifyRun({ ...good, incoherentFraction: 0.3 }, th).class).toBe('decoupled');
    expect(classifyRun({ ...good, gainOverStatic: 1.26, incoherentFraction: 0.15 }, th).reason).toBe(
      'gap power 0.15 of the phase-averaged (decoupled) level < minimum 0.3: the dither does not decouple',
    );
    expect(classifyRun({ ...good, incoherentFraction: 0.8 }, th).reason).toContain(
      'gap power 0.8 of the phase-averaged level >= minimum 0.3',
    );
    // the gain test comes first: its reason wins when both fail
    expect(classifyRun({ ...good, gainOverStatic: 0.5, incoherentFraction: 0.1 }, th).reason).toBe(
      'gain over static 0.5 < minimum 1.1',
    );
    // no external cavity (null) or no threshold: the test is skipped and says so
    expect(classifyRun({ ...good, incoherentFraction: null }, th).reason).toContain(
      'incoherent-level test skipped',
    );
    const { min_incoherent_fraction: _unused, ...noThreshold } = th;
    expect(classifyRun({ ...good, incoherentFraction: 0.01 }, noThreshold).class).toBe('decoupled');
  });

  it('modulated above the ripple limit, not at it', () => {
    expect(classifyRun({ ...good, rippleRel: 0.1001 }, th).class).toBe('modulated');
    expect(classifyRun({ ...good, rippleRel: 0.1 }, th).class).toBe('decoupled');
    expect(classifyRun({ ...good, rippleRel: 0.23 }, th).reason).toBe('ripple 0.23 > limit 0.1');
    expect(classifyRun({ ...good, rippleRel: NaN }, th).class).toBe('modulated');
  });

  it('follows the stated precedence when several tests fail', () => {
    const bad: ClassMetrics = {
      freeRunningIntracavity_W: 0,
      hopsPerPeriod: 5,
      gainOverStatic: 0.2,
      rippleRel: 3,
    };
    expect(classifyRun(bad, th).class).toBe('no-lasing');
    expect(classifyRun({ ...bad, freeRunningIntracavity_W: 1 }, th).class).toBe('hopping');
    expect(classifyRun({ ...bad, freeRunningIntracavity_W: 1, hopsPerPeriod: 0 }, th).class).toBe('no-gain');
    expect(
      classifyRun({ ...bad, freeRunningIntracavity_W: 1, hopsPerPeriod: 0, gainOverStatic: 2 }, th).class,
    ).toBe('modulated');
    expect(
      classifyRun({ ...bad, status: 'numerical-failure', message: 'step size underflow at t = 3e-6 s' }, th),
    ).toEqual({
      class: 'numerical-failure',
      reason: 'step size underflow at t = 3e-6 s',
    });
  });

  it('skips the hop test for a still mirror and the gain test without a static reference', () => {
    const r = classifyRun({ ...good, hopsPerPeriod: null, gainOverStatic: null }, th);
    expect(r.class).toBe('decoupled');
    expect(r.reason).toContain('hop test skipped');
    expect(r.reason).toContain('gain test skipped');
  });
});
