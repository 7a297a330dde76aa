/**
 * Colours and words for the run classes (our own choice of palette): one colour per
 * class, used for badges in tables and for the class map of a sweep, always with the
 * class name in words beside it so the colour is never the only carrier.
 */
import { RUN_CLASSES, RunClass } from '../results/summary';
import { html, SafeHtml } from './safe-html';

export interface ClassStyle {
  colour: string;
  /** one sentence saying what the class means */
  meaning: string;
}

export const CLASS_STYLE: Record<RunClass, ClassStyle> = {
  decoupled: {
    colour: '#1f7a5c',
    meaning:
      'gains over the mirror held still and nears the phase-averaged level, in-band ripple below the limit, no mode hops',
  },
  modulated: {
    colour: '#c98e12',
    meaning:
      'gains over the mirror held still and nears the phase-averaged level, but the in-band ripple is above the limit',
  },
  hopping: { colour: '#b23a5b', meaning: 'the laser hops between modes more often than allowed' },
  'no-gain': {
    colour: '#7d8796',
    meaning:
      'the drive gives too little gain over the mirror held still, or leaves the gap far below the phase-averaged level that decoupling gives',
  },
  'no-lasing': { colour: '#2e3350', meaning: 'the laser does not reach threshold' },
  'numerical-failure': { colour: '#6b3fa0', meaning: 'the integration failed; no result' },
};

/** Colour for a class name, grey for an unknown or missing class. */
export function classColour(c: string | null | undefined): string {
  return c && c in CLASS_STYLE ? CLASS_STYLE[c as RunClass].colour : '#a0a6b0';
}

/** A coloured badge with the class name in words ("not computed" when missing). */
export function classBadge(c: string | null | undefined): SafeHtml {
  return html`<span class="badge" style="background:${classColour(c)}">${c ?? 'not computed'}</span>`;
}

/** A legend in words: one swatch and sentence per class. */
export function classLegend(classes: readonly string[] = RUN_CLASSES): SafeHtml {
  return html`<ul class="legend-words">
    ${classes.map(
      (c) =>
        html`<li>
          <span class="sw" style="background:${classColour(c)}"></span
          ><b>${c}</b>${c in CLASS_STYLE ? html` — ${CLASS_STYLE[c as RunClass].meaning}` : ''}
        </li>`,
    )}
  </ul>`;
}
