/**
 * The words the reports use, one plain line each. Every report ends with the terms it
 * uses (glossarySection); the README's glossary says the same. "Mirror held still" is the
 * one name for what the terminal and older reports also called "static" or "still".
 */
import { html, SafeHtml } from './safe-html';

export const GLOSSARY: Record<string, string> = {
  gap: 'the short cavity between the laser’s output coupler (M2) and the return mirror (M3); "gap power" is the one-way power circulating in it.',
  "laser's own output":
    'what the laser emits with no return mirror (free-running); the headline compares the gap power with it.',
  'free-running': 'the laser alone, the return mirror taken away.',
  'mirror held still':
    'the return mirror at rest, scanned slowly over half a wavelength (also called the static reference); its mean is the baseline the dither has to beat.',
  'gain over the mirror held still':
    'driven mean gap power over the mean of the still-mirror curve at the same rest positions; above 1 means the dither helps.',
  'gain over the still-mirror curve at the same positions':
    'driven mean gap power over what the still-mirror curve gives along the positions the mirror actually passes through; the class uses the smaller of the two gains.',
  enhancement: 'driven mean gap power over the free-running laser’s intracavity power (not its output).',
  'phase-averaged level':
    'the gap power the laser would give if the returned light’s phase were random, i.e. fully decoupled: the Airy response averaged over one free spectral range times the free-running intracavity power.',
  'incoherent fraction': 'driven mean gap power over the phase-averaged level; near 1 when fully decoupled.',
  'standard error':
    'the uncertainty of a mean from the finite simulated time and rest positions (one standard deviation of the mean); ± figures are standard errors.',
  'detection band':
    'the bandwidth of the user’s detector (analysis.detection_bandwidth); power is averaged over 1 / bandwidth.',
  ripple: 'peak-to-peak over mean of the gap power as seen in the detection band.',
  'mode hop': 'another laser mode becomes the strongest and stays so for longer than the dwell time.',
  'critical speed':
    'the mirror speed at which the Doppler shift 2v/λ equals the laser’s locking half width: a first-order rule for when feedback decouples; the simulation decides the class.',
  'rest position':
    'a starting position of the mirror within half a wavelength; the driven run is averaged over several.',
  'interface mismatch':
    'how far the laser’s and the gap’s bookkeeping of the power crossing the output coupler disagree; large values mean the model is stretched.',
  'power balance error':
    'energy in minus energy out minus change of stored energy, relative; an integration check.',
  'laser output (net)':
    'net power through the output coupler: light leaving the laser minus light the gap returns into it; it can dip below 0 for moments when more light comes back than leaves.',
  'reachable region':
    'the drive amplitudes and frequencies the described actuator can deliver within its voltage, current and resonance-margin ratings.',
  'hop onset':
    'for each drive frequency, the smallest amplitude at which hops appear (measured on the grid).',
  'decoupling boundary':
    'for each drive frequency, the smallest amplitude whose class is decoupled (measured on the grid).',
  'speed rule': 'the amplitude A = v_c / (2πf) at which the peak speed equals the critical speed.',
  'recommended operating point':
    'the reachable decoupled point, with decoupled neighbours in amplitude and frequency, that uses the least of the amplifier’s ratings.',
  'no margin on this grid':
    'no decoupled point has decoupled neighbours on the grid, so the recommended point may sit at the edge of the decoupled region: refine the grid before buying on it.',
  'mode-steps per second':
    'time steps times laser modes computed per second of wall-clock time (a speed figure).',
  'equal peak voltage':
    'in a comparison, every waveform gets the same peak drive voltage, so each asks the same of the amplifier.',
};

/** A "Words used in this report" section with the given terms, in the given order. */
export function glossarySection(terms: readonly string[]): SafeHtml {
  const known = terms.filter((t) => t in GLOSSARY);
  return html`<section id="glossary" class="glossary">
    <h2>Words used in this report</h2>
    <dl>
      ${known.map(
        (t) =>
          html`<div class="term">
            <dt>${t}</dt>
            <dd>${GLOSSARY[t]}</dd>
          </div>`,
      )}
    </dl>
  </section>`;
}
