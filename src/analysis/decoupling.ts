/**
 * The first-order decoupling rule of docs/model.md §4: the feedback is decoupled while
 * the Doppler shift 2 |v| / lambda of the returned light exceeds the laser's
 * injection-locking half width.
 *
 * Injection rate. With dE/dt = ... + (t2 sqrt(eta_fb) / tau_L) b (docs/model.md §3.1), the
 * injected field acts on the laser field at the rate
 *     kappa = (t2 sqrt(eta_fb) / tau_L) |b| / |E|        (1/s),
 * and a laser with amplitude-phase coupling alpha locks to injected light within the
 * half width
 *     delta_omega_L = kappa sqrt(1 + alpha^2)             (rad/s),   delta_nu_L = delta_omega_L / (2 pi)
 * (F. Mogensen, H. Olesen, G. Jacobsen, "Locking conditions and stability properties for
 * a semiconductor laser with external light injection", IEEE J. Quantum Electron. 21,
 * 784 (1985): the edge of the locking range on the side widened by alpha, stability
 * limits aside; alpha = 0 gives Adler's half width kappa, R. Adler, Proc. IRE 34, 351 (1946)).
 * Critical speed: the Doppler shift 2 v_c / lambda equals delta_nu_L, v_c = lambda delta_nu_L / 2.
 *
 * Time below v_c. For v = v_peak cos(theta), theta uniform over a period,
 * P(|v| < v_c) = (2/pi) arcsin(v_c / v_peak) (1 when v_c >= v_peak). A triangle drive
 * moves at constant speed v_peak between instantaneous turning points (reversal of
 * measure zero), so the fraction is 0 when v_c <= v_peak and 1 when v_c > v_peak; the
 * real finite reversal time of an actuator is not modelled here.
 *
 * Landau-Zener estimate. A laser mode (coupling rate kappa_L = t2 sqrt(eta_fb) / tau_L) and
 * an external resonance (kappa_E = t2 sqrt(eta_fb) / tau_E) form a two-mode system with
 * coupling g, g^2 = kappa_L kappa_E. The mirror sweeps the external round-trip phase
 * phi = omega tau at d phi / dt = 4 pi v / lambda, so the angular detuning phi / tau_E
 * sweeps at beta = (4 pi v / lambda) / tau_E (rad/s^2). The probability of a diabatic
 * (decoupled) passage is exp(-2 pi g^2 / beta) (L. Landau, Phys. Z. Sowjetunion 2, 46
 * (1932); C. Zener, "Non-adiabatic crossing of energy levels", Proc. R. Soc. A 137, 696
 * (1932); the formula in angular-frequency units, g and beta as here). We call the passage
 * decoupled from the speed at which beta = 2 pi g^2, where that probability is e^-1:
 *     v_LZ = 2 pi g^2 tau_E lambda / (4 pi) = g^2 tau_E lambda / 2 = T2 eta_fb lambda / (2 tau_L)
 * (T2 = t2^2), independent of tau_E. It uses the bare coupling, not the field ratio.
 */

export interface CouplingParams {
  /** amplitude transmission of the output coupler t2 = sqrt(T2), dimensionless */
  t2: number;
  /** power overlap of laser and external mode eta_fb, dimensionless 0..1 */
  feedbackEfficiency: number;
  /** laser round-trip time tau_L = 2 n L1 / c, s */
  laserRoundTrip_s: number;
  /** external round-trip time tau_E = 2 L2 / c, s */
  externalRoundTrip_s: number;
  /** linewidth-enhancement factor alpha, dimensionless */
  alpha: number;
  /** vacuum wavelength, m */
  wavelength_m: number;
}

/** kappa = (t2 sqrt(eta_fb) / tau_L) * fieldRatio, 1/s; fieldRatio = |b| / |E| (dimensionless). */
export function injectionRate_per_s(p: CouplingParams, fieldRatio: number): number {
  return ((p.t2 * Math.sqrt(p.feedbackEfficiency)) / p.laserRoundTrip_s) * fieldRatio;
}

/** Locking half width delta_nu_L = kappa sqrt(1 + alpha^2) / (2 pi), Hz (kappa in 1/s). */
export function lockingHalfWidth_Hz(kappa_per_s: number, alpha: number): number {
  return (kappa_per_s * Math.sqrt(1 + alpha * alpha)) / (2 * Math.PI);
}

/** Speed whose Doppler shift 2 v / lambda equals the half width: v_c = lambda delta_nu / 2, m/s. */
export function criticalSpeed_m_s(lockingHalfWidth_Hz: number, wavelength_m: number): number {
  return (wavelength_m * lockingHalfWidth_Hz) / 2;
}

/** Doppler shift of one reflection from a mirror moving at speed v: 2 |v| / lambda, Hz. */
export function dopplerShift_Hz(speed_m_s: number, wavelength_m: number): number {
  return (2 * Math.abs(speed_m_s)) / wavelength_m;
}

/**
 * Fraction of time a sinusoidal motion spends below speed v_c: (2/pi) arcsin(v_c / v_peak),
 * 1 when v_c >= v_peak (including a still mirror), 0 when v_c <= 0. Dimensionless.
 */
export function fractionBelowCriticalSine(vCritical_m_s: number, vPeak_m_s: number): number {
  if (!(vCritical_m_s > 0)) return 0;
  if (vCritical_m_s >= Math.abs(vPeak_m_s)) return 1;
  return (2 / Math.PI) * Math.asin(vCritical_m_s / Math.abs(vPeak_m_s));
}

/**
 * The same for a triangle drive: constant speed v_peak, instantaneous turning points, so
 * 0 when v_c <= v_peak and 1 when v_c > v_peak (a still mirror, v_peak = 0, gives 1 for v_c > 0).
 */
export function fractionBelowCriticalTriangle(vCritical_m_s: number, vPeak_m_s: number): number {
  return vCritical_m_s > Math.abs(vPeak_m_s) ? 1 : 0;
}

/**
 * For any velocity waveform sampled uniformly over whole periods: the fraction of samples
 * with |v| < v_c (dimensionless; NaN for an empty array). Converges to the time fraction
 * as the sampling refines (error about one sample per crossing of |v| = v_c).
 */
export function fractionBelowCriticalSampled(velocity_m_s: ArrayLike<number>, vCritical_m_s: number): number {
  const n = velocity_m_s.length;
  if (n === 0) return NaN;
  let below = 0;
  for (let i = 0; i < n; i++) if (Math.abs(velocity_m_s[i]) < vCritical_m_s) below++;
  return below / n;
}

/**
 * Landau-Zener critical speed v_LZ = g^2 tau_E lambda / 2 with g^2 = kappa_L kappa_E,
 * kappa_L = t2 sqrt(eta_fb) / tau_L, kappa_E = t2 sqrt(eta_fb) / tau_E (m/s): the speed
 * at which the detuning sweep rate (4 pi v / lambda) / tau_E equals 2 pi g^2, i.e. the
 * diabatic passage probability exp(-2 pi g^2 / rate) is e^-1. See the file comment.
 */
export function landauZenerCriticalSpeed_m_s(p: CouplingParams): number {
  const c = p.t2 * Math.sqrt(p.feedbackEfficiency);
  const g2 = (c / p.laserRoundTrip_s) * (c / p.externalRoundTrip_s);
  return (g2 * p.externalRoundTrip_s * p.wavelength_m) / 2;
}

/** Diabatic (decoupled) passage probability exp(-2 pi g^2 / beta) at mirror speed v (dimensionless; 0 at v = 0). */
export function landauZenerDiabaticProbability(p: CouplingParams, speed_m_s: number): number {
  const v = Math.abs(speed_m_s);
  if (v === 0) return 0;
  const c = p.t2 * Math.sqrt(p.feedbackEfficiency);
  const g2 = (c / p.laserRoundTrip_s) * (c / p.externalRoundTrip_s);
  const beta = (4 * Math.PI * v) / p.wavelength_m / p.externalRoundTrip_s;
  return Math.exp((-2 * Math.PI * g2) / beta);
}

export interface DesignRuleInput extends CouplingParams {
  /** |b| / |E| (dimensionless), e.g. sqrt(mean |b|^2 / mean |E|^2); null when unknown */
  fieldRatio: number | null;
  waveform: 'sine' | 'triangle' | 'off';
  /** peak mirror speed, m/s (sine: 2 pi f A; triangle: 4 f A) */
  peakSpeed_m_s: number;
}

export interface DesignRuleResult {
  injectionRate_per_s: number | null;
  lockingHalfWidth_Hz: number | null;
  criticalSpeed_m_s: number | null;
  criticalSpeedLandauZener_m_s: number;
  peakDoppler_Hz: number;
  /** time fraction below the (injection-locking) critical speed; null when v_c is unknown */
  fractionBelowCritical: number | null;
}

/** All quantities of the rule for one run (fields of DriveSummary); see the file comment. */
export function designRule(x: DesignRuleInput): DesignRuleResult {
  const peakDoppler = dopplerShift_Hz(x.peakSpeed_m_s, x.wavelength_m);
  const vLZ = landauZenerCriticalSpeed_m_s(x);
  if (x.fieldRatio === null || !Number.isFinite(x.fieldRatio)) {
    return {
      injectionRate_per_s: null,
      lockingHalfWidth_Hz: null,
      criticalSpeed_m_s: null,
      criticalSpeedLandauZener_m_s: vLZ,
      peakDoppler_Hz: peakDoppler,
      fractionBelowCritical: null,
    };
  }
  const kappa = injectionRate_per_s(x, x.fieldRatio);
  const lock = lockingHalfWidth_Hz(kappa, x.alpha);
  const vc = criticalSpeed_m_s(lock, x.wavelength_m);
  const vPeak = x.waveform === 'off' ? 0 : x.peakSpeed_m_s;
  const frac =
    x.waveform === 'triangle'
      ? fractionBelowCriticalTriangle(vc, vPeak)
      : fractionBelowCriticalSine(vc, vPeak);
  return {
    injectionRate_per_s: kappa,
    lockingHalfWidth_Hz: lock,
    criticalSpeed_m_s: vc,
    criticalSpeedLandauZener_m_s: vLZ,
    peakDoppler_Hz: peakDoppler,
    fractionBelowCritical: frac,
  };
}
