/**
 * One class per run from its metrics (docs/model.md §4, CONTRACT.md `class`).
 *
 * Order of precedence (the first test that fires decides):
 *   1. numerical-failure  the run's status says so (passed through with its message);
 *   2. no-lasing          free-running one-way intracavity power < analysis.lasing_power;
 *   3. hopping            hops per drive period > analysis.max_hops_per_period;
 *   4. no-gain            gain over static < analysis.min_gain_over_static, or the mean
 *                         gap power below analysis.min_incoherent_fraction of the
 *                         phase-averaged (incoherent) level: a decoupled laser fills the
 *                         gap with the phase average of the Airy response, so a run far
 *                         below it is not decoupled however it compares with the static
 *                         curve (a tiny fast stroke can beat a badly placed still mirror
 *                         by 20 % while holding a seventh of what decoupling gives);
 *   5. modulated          in-band ripple > analysis.ripple_limit;
 *   6. decoupled          otherwise (enhanced, low ripple, no hops).
 * A laser that does not lase has nothing else to judge; hops make the ripple and the mean
 * meaningless for a user, so they come before gain; without gain the ripple is moot.
 * Comparisons are strict: a value exactly at a threshold passes that test.
 * A null hops-per-period (still mirror) skips the hop test; a null gain over static (no
 * static reference) skips the gain test, a null incoherent fraction (no external cavity,
 * or none of the laser's light coupled into it) the incoherent-level test; the reason says so. A ripple that is not a
 * finite number (mean external power not positive) counts as modulated.
 *
 * The metrics are means over rest offsets with a standard error (docs/model.md §4.2).
 * Where a test's value lies within one standard error of its threshold, the reason says
 * so for that test, whichever way it went: the class could flip with another set of
 * offsets.
 */
import type { RunClass } from '../results/summary';

/** The metrics classifyRun reads (SI; ratios dimensionless). */
export interface ClassMetrics {
  /** 'numerical-failure' short-circuits everything (default 'ok') */
  status?: 'ok' | 'numerical-failure';
  /** the failure message, used as the reason */
  message?: string | null;
  /** free-running one-way intracavity power, W */
  freeRunningIntracavity_W: number;
  /** hops per drive period, null for a still mirror */
  hopsPerPeriod: number | null;
  /** mean external power / static mean, null without a static reference */
  gainOverStatic: number | null;
  /** in-band relative ripple (max - min) / mean */
  rippleRel: number;
  /**
   * mean external power over the phase-averaged level eta_fb T2 / (1 - R2 R3') times the
   * free-running intracavity power (dimensionless; 1 = what a fully decoupled laser gives);
   * null or absent without an external cavity
   */
  incoherentFraction?: number | null;
  /** standard errors of the metrics above (same units); absent or null: not known */
  stderr?: {
    hopsPerPeriod?: number | null;
    gainOverStatic?: number | null;
    rippleRel?: number | null;
    incoherentFraction?: number | null;
  };
}

/** The thresholds, with the key names of the scenario's `analysis` section. */
export interface ClassThresholds {
  lasing_power: number;
  max_hops_per_period: number;
  min_gain_over_static: number;
  /** absent: the incoherent-level test is not made */
  min_incoherent_fraction?: number;
  ripple_limit: number;
}

export interface ClassResult {
  class: RunClass;
  reason: string;
}

/** Three significant digits, no trailing zeros ("0.23", "1.2e-7"). */
function fmt(x: number): string {
  if (!Number.isFinite(x)) return String(x);
  if (x === 0) return '0';
  const a = Math.abs(x);
  if (a >= 1e-3 && a < 1e6) return String(Number(x.toPrecision(3)));
  return x
    .toExponential(2)
    .replace(/\.?0+e/, 'e')
    .replace('e+', 'e');
}

/** " (within one standard error ...)" when |value - threshold| <= stderr, else "". */
function closeCall(value: number, threshold: number, stderr: number | null | undefined): string {
  if (stderr === null || stderr === undefined || !Number.isFinite(stderr) || !Number.isFinite(value))
    return '';
  if (Math.abs(value - threshold) > stderr) return '';
  return ` (within one standard error ${fmt(stderr)} of the threshold: the class could flip)`;
}

/** The run's class and a reason in words with the numbers that decided it; see the file comment. */
export function classifyRun(m: ClassMetrics, t: ClassThresholds): ClassResult {
  const e = m.stderr ?? {};
  if (m.status === 'numerical-failure') {
    return {
      class: 'numerical-failure',
      reason:
        m.message !== undefined && m.message !== null && m.message !== '' ? m.message : 'numerical failure',
    };
  }
  const p = m.freeRunningIntracavity_W;
  if (!(p >= t.lasing_power)) {
    return {
      class: 'no-lasing',
      reason: `free-running intracavity power ${fmt(p)} W < lasing threshold ${fmt(t.lasing_power)} W`,
    };
  }
  const passed: string[] = [`free-running intracavity power ${fmt(p)} W >= ${fmt(t.lasing_power)} W`];
  if (m.hopsPerPeriod === null) {
    passed.push('hop test skipped (still mirror)');
  } else if (!(m.hopsPerPeriod <= t.max_hops_per_period)) {
    return {
      class: 'hopping',
      reason: `hops per period ${fmt(m.hopsPerPeriod)} > limit ${fmt(t.max_hops_per_period)}${closeCall(m.hopsPerPeriod, t.max_hops_per_period, e.hopsPerPeriod)}`,
    };
  } else {
    passed.push(
      `hops per period ${fmt(m.hopsPerPeriod)} <= limit ${fmt(t.max_hops_per_period)}${closeCall(m.hopsPerPeriod, t.max_hops_per_period, e.hopsPerPeriod)}`,
    );
  }
  if (m.gainOverStatic === null) {
    passed.push('gain test skipped (no static reference)');
  } else if (!(m.gainOverStatic >= t.min_gain_over_static)) {
    return {
      class: 'no-gain',
      reason: `gain over static ${fmt(m.gainOverStatic)} < minimum ${fmt(t.min_gain_over_static)}${closeCall(m.gainOverStatic, t.min_gain_over_static, e.gainOverStatic)}`,
    };
  } else {
    passed.push(
      `gain over static ${fmt(m.gainOverStatic)} >= minimum ${fmt(t.min_gain_over_static)}${closeCall(m.gainOverStatic, t.min_gain_over_static, e.gainOverStatic)}`,
    );
  }
  const frac = m.incoherentFraction ?? null;
  if (frac === null || t.min_incoherent_fraction === undefined) {
    passed.push(
      'incoherent-level test skipped (no phase-averaged level: no external cavity or no coupling into it)',
    );
  } else if (!(frac >= t.min_incoherent_fraction)) {
    return {
      class: 'no-gain',
      reason: `gap power ${fmt(frac)} of the phase-averaged (decoupled) level < minimum ${fmt(t.min_incoherent_fraction)}: the dither does not decouple${closeCall(frac, t.min_incoherent_fraction, e.incoherentFraction)}`,
    };
  } else {
    passed.push(
      `gap power ${fmt(frac)} of the phase-averaged level >= minimum ${fmt(t.min_incoherent_fraction)}${closeCall(frac, t.min_incoherent_fraction, e.incoherentFraction)}`,
    );
  }
  if (!Number.isFinite(m.rippleRel)) {
    return {
      class: 'modulated',
      reason: `ripple undefined (${fmt(m.rippleRel)}; mean external power not positive)`,
    };
  }
  if (m.rippleRel > t.ripple_limit) {
    return {
      class: 'modulated',
      reason: `ripple ${fmt(m.rippleRel)} > limit ${fmt(t.ripple_limit)}${closeCall(m.rippleRel, t.ripple_limit, e.rippleRel)}`,
    };
  }
  passed.push(
    `ripple ${fmt(m.rippleRel)} <= limit ${fmt(t.ripple_limit)}${closeCall(m.rippleRel, t.ripple_limit, e.rippleRel)}`,
  );
  return { class: 'decoupled', reason: passed.join('; ') };
}
