/**
 * The page skeleton shared by every report: one self-contained HTML file with the
 * plotting library inlined, the data as JSON, a print style sheet and the laser-safety
 * caution (docs/model.md §8). The page makes no network request of any kind: no
 * external script, style, font or image; fonts are the reader's system fonts.
 */
import { readFileSync } from 'node:fs';
import { html, jsonForScript, rawHtml, SafeHtml } from './safe-html';

/** One plot: a div id, plotly traces and layout, drawn by the page's start-up script. */
export interface PlotSpec {
  id: string;
  data: Record<string, unknown>[];
  layout: Record<string, unknown>;
}

export interface PageSpec {
  /** document title (escaped) */
  title: string;
  /** what the page is, for the header line and the `data-report-kind` attribute */
  kind: 'run' | 'sweep' | 'batch' | 'yield' | 'comparison' | 'compare';
  /** main heading (escaped), usually the scenario name */
  heading: string;
  /** one line under the heading (escaped) */
  subheading: string;
  body: SafeHtml;
  plots: PlotSpec[];
  /** tool version and the time the page was written, shown in the footer */
  footer: string;
}

let plotlyCache: string | null = null;

/**
 * The plotly.js-dist-min bundle as text, checked to be safe inside a <script> element
 * (it must not contain "</script"). Read once per process.
 */
export function plotlyBundle(): string {
  if (plotlyCache === null) {
    const js = readFileSync(require.resolve('plotly.js-dist-min'), 'utf8');
    if (/<\/script/i.test(js)) throw new Error('plotly bundle contains "</script" and cannot be inlined');
    plotlyCache = js;
  }
  return plotlyCache;
}

/** Trace colours of this tool (our own choice): petrol, rust, moss, plum, slate blue, ochre, teal, umber. */
export const TRACE_COLOURS = [
  '#0e5e6f',
  '#c2571a',
  '#5b7d2a',
  '#8e3b76',
  '#3d5a99',
  '#a8842c',
  '#2f8f83',
  '#7a4e2d',
];

const FONT = 'system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif';

/** A plotly layout with this tool's defaults, overridden by `extra` (shallow merge). */
export function baseLayout(extra: Record<string, unknown>): Record<string, unknown> {
  return {
    font: { family: FONT, size: 12, color: '#1d2433' },
    paper_bgcolor: '#ffffff',
    plot_bgcolor: '#ffffff',
    colorway: TRACE_COLOURS,
    margin: { l: 70, r: 24, t: 44, b: 52 },
    hovermode: 'closest',
    legend: { orientation: 'h', x: 0, y: 1.02, xanchor: 'left', yanchor: 'bottom' },
    height: 340,
    ...extra,
  };
}

/**
 * An axis with this tool's grid style; `extra` overrides. An axis title ending in a SI
 * unit in brackets ("(W)", "(m)", "(s)") gets SI-prefixed tick labels ("80m", "5µ").
 */
export function axis(title: string, extra: Record<string, unknown> = {}): Record<string, unknown> {
  const unit = /\((W|m|s|m\/s|Hz|V|A)\)$/.exec(title)?.[1];
  const si = unit !== undefined && extra.type !== 'log';
  return {
    // the unit after the prefix, so watts never read like metres ("120mW", not "120m")
    ...(si ? { tickformat: '~s', ticksuffix: unit } : {}),
    title: { text: title },
    gridcolor: '#e4e7ec',
    zerolinecolor: '#c5cad3',
    linecolor: '#9aa1ad',
    showline: true,
    ticks: 'outside',
    exponentformat: 'SI',
    ...extra,
  };
}

/**
 * The div a plot is drawn into, inside one <figure> with its `title` (escaped, shown
 * above as a heading) and its `caption` (escaped, shown under it), so that print keeps
 * title, plot and caption on one page.
 */
export function plotDiv(id: string, caption?: string, title?: string): SafeHtml {
  return html`<figure class="plot-box">
    ${title ? html`<h3 class="fig-title">${title}</h3>` : ''}
    <div class="plot" id="${id}"></div>
    ${caption ? html`<figcaption>${caption}</figcaption>` : ''}
  </figure>`;
}

/**
 * The laser-safety caution shown on every page (docs/model.md §8): gap powers can
 * reach watts while the laser's output is milliwatts, the beam in the gap may exceed
 * the laser's labelled class, local rules (IEC 60825 series) and the laser safety
 * officer apply, actuator drives can be high voltage.
 */
export function cautionBox(): SafeHtml {
  return html`<aside class="caution" role="note" aria-label="Laser safety">
    <p class="caution-title">Laser safety</p>
    <p>
      The power circulating in the gap between the output coupler and the return mirror can reach watts even
      when the laser's own output is milliwatts. The beam inside the gap may therefore exceed the laser's
      labelled hazard class. Follow the local laser-safety rules (for example the IEC 60825 series) and the
      site's laser safety officer. Actuator drives can be high voltage: take the usual electrical precautions.
      This tool is a design aid; it does not replace local codes or licensed practice.
    </p>
  </aside>`;
}

/* No source may be fetched at all (default-src 'none'); inline script and style only. */
const CSP =
  "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data: blob:; font-src data:";

const STYLE = `
:root { --ink:#1d2433; --muted:#5d6575; --paper:#f6f5f1; --card:#ffffff; --rule:#d9dce2; --accent:#0e5e6f; --warn-bg:#fbeede; --warn-rule:#c2571a; --caution-bg:#fff6d6; --caution-rule:#a8842c; }
* { box-sizing: border-box; }
html { background: var(--paper); }
body { margin: 0; color: var(--ink); font-family: ${FONT}; font-size: 15px; line-height: 1.45; }
header.top { background: var(--accent); color: #fff; padding: 18px 28px 16px; }
header.top .what { font-size: 12px; letter-spacing: .08em; text-transform: uppercase; opacity: .8; margin: 0; }
header.top h1 { margin: 4px 0 2px; font-size: 26px; font-weight: 650; word-break: break-word; }
header.top .sub { margin: 0; opacity: .9; }
main { max-width: 1120px; margin: 0 auto; padding: 18px 24px 40px; }
section { background: var(--card); border: 1px solid var(--rule); border-radius: 6px; padding: 14px 20px 16px; margin: 16px 0; }
section h2 { font-size: 18px; margin: 0 0 10px; padding-bottom: 6px; border-bottom: 2px solid var(--accent); color: var(--accent); font-weight: 650; }
section > h3, section h3 { font-size: 15px; margin: 14px 0 6px; }
p.note { color: var(--muted); margin: 6px 0; font-size: 13.5px; }
table { border-collapse: collapse; margin: 6px 0 8px; font-size: 14px; }
th, td { text-align: left; padding: 4px 12px 4px 0; border-bottom: 1px solid #eceef2; vertical-align: top; }
th { font-weight: 600; color: var(--muted); }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; padding-left: 12px; }
table.compare td, table.compare th { padding-right: 18px; }
table.compare thead th { color: var(--ink); border-bottom: 2px solid var(--rule); }
table.scenario td { white-space: nowrap; }
tr.flag td, tr.flag th { background: var(--warn-bg); }
.nc { color: var(--muted); font-style: italic; }
.grid2 { display: grid; grid-template-columns: repeat(auto-fit, minmax(320px, 1fr)); gap: 0 28px; }
.grid-pairs { display: grid; grid-template-columns: repeat(auto-fit, minmax(440px, 1fr)); gap: 0 28px; }
.verdict { border-left: 8px solid var(--accent); padding: 10px 16px; margin: 4px 0 8px; background: #f2f6f7; }
.verdict .cls { font-size: 22px; font-weight: 700; margin: 0; }
.verdict .why { margin: 4px 0 0; font-size: 15px; }
.badge { display: inline-block; padding: 1px 9px; border-radius: 10px; color: #fff; font-size: 13px; font-weight: 600; white-space: nowrap; }
.warnlist { margin: 6px 0; padding-left: 0; list-style: none; }
.warnlist li { background: var(--warn-bg); border-left: 4px solid var(--warn-rule); padding: 5px 10px; margin: 4px 0; }
.warnlist code { font-size: 12.5px; }
.caution { background: var(--caution-bg); border: 1px solid var(--caution-rule); border-left: 8px solid var(--caution-rule); border-radius: 4px; padding: 8px 14px; margin: 16px 0; font-size: 13.5px; }
.caution p { margin: 3px 0; }
.caution-title { font-weight: 700; text-transform: uppercase; letter-spacing: .06em; font-size: 12.5px; }
figure.plot-box { margin: 8px 0 14px; }
.plot { width: 100%; min-height: 200px; }
figcaption { color: var(--muted); font-size: 13px; margin-top: 2px; }
.legend-words { display: flex; flex-wrap: wrap; gap: 6px 18px; margin: 4px 0 10px; padding: 0; list-style: none; font-size: 13.5px; }
.legend-words .sw { display: inline-block; width: 14px; height: 14px; border-radius: 3px; vertical-align: -2px; margin-right: 6px; border: 1px solid rgba(0,0,0,.2); }
.plot-error { color: #8a1c1c; background: #fbe9e9; padding: 8px; }
footer { color: var(--muted); font-size: 12.5px; text-align: center; padding: 12px; }
.headline { display: grid; grid-template-columns: 1fr; gap: 6px; margin: 4px 0 12px; }
.headline .answer { border-left: 6px solid #b9bec8; background: #f7f8fa; padding: 6px 12px; }
.headline .answer.good { border-left-color: #1f7a5c; }
.headline .answer.bad { border-left-color: #b23a5b; background: #fbeef1; }
.headline .q { margin: 0; font-size: 13px; color: var(--muted); font-weight: 600; }
.headline .q .n { display: inline-block; min-width: 1.4em; color: var(--accent); }
.headline .a { margin: 1px 0 0; font-size: 17px; font-weight: 650; }
.headline .d { margin: 2px 0 0; font-size: 12.5px; color: var(--muted); }
h3.fig-title { font-size: 15px; margin: 12px 0 4px; }
table.scenario td { white-space: normal; overflow-wrap: anywhere; }
table.scenario th { white-space: nowrap; }
.scenario-groups > .wide { grid-column: 1 / -1; }
.scenario-groups > div { min-width: 0; }
.glossary dl { margin: 0; display: grid; grid-template-columns: repeat(auto-fit, minmax(420px, 1fr)); gap: 4px 28px; }
.glossary .term { break-inside: avoid; }
.glossary dt { font-weight: 650; display: inline; }
.glossary dt::after { content: ': '; }
.glossary dd { display: inline; margin: 0; color: var(--ink); font-size: 13.5px; }
.figure-group { margin: 4px 0 10px; }
.legend-words { break-inside: avoid; }
a { color: var(--accent); }
@media print {
  @page { size: A4 portrait; margin: 14mm 15mm; }
  html, body { background: #fff; font-size: 10.5pt; }
  header.top { background: none; color: var(--ink); border-bottom: 2px solid var(--ink); padding: 0 0 6px; }
  main { max-width: none; padding: 0; }
  section { border: none; padding: 0; margin: 10px 0; break-inside: auto; }
  figure.plot-box, table, .verdict, .caution, .keep, .figure-group, .headline .answer, .map-box, .glossary .term { break-inside: avoid; page-break-inside: avoid; }
  h2, h3, .fig-title, h2 + p.note, h3 + p.note { break-after: avoid; page-break-after: avoid; }
  figcaption { break-before: avoid; page-break-before: avoid; }
  .grid2, .grid-pairs { display: block; }
  .plot { width: 180mm !important; max-width: 180mm; overflow: hidden; }
  .glossary dl { display: block; }
  .modebar, .modebar-container, .no-print { display: none !important; }
  .caution { background: #fff; }
  a { color: var(--ink); text-decoration: none; }
}
`;

/* Runs in the page: draws every plot from the JSON block; a plot that fails to draw
   shows a message in its place and reports on the console. For printing, each plot is
   laid out at the A4 text width (180 mm at 96 px/in = 680 px) and restored after. */
const BOOT = `
(function () {
  var spec = JSON.parse(document.getElementById('report-data').textContent);
  var config = { displaylogo: false, responsive: true, showLink: false, showSendToCloud: false, showEditInChartStudio: false,
    modeBarButtonsToRemove: ['sendDataToCloud', 'lasso2d', 'select2d'] };
  var drawn = [];
  spec.plots.forEach(function (p) {
    var el = document.getElementById(p.id);
    if (!el) { console.error('report: no element for plot ' + p.id); return; }
    try {
      Plotly.newPlot(el, p.data, p.layout, config);
      drawn.push(el);
    } catch (e) {
      el.className += ' plot-error';
      el.textContent = 'This plot could not be drawn: ' + (e && e.message ? e.message : e);
      console.error(e);
    }
  });
  window.addEventListener('beforeprint', function () {
    drawn.forEach(function (el) { Plotly.relayout(el, { width: 680, height: Math.min(el._fullLayout ? el._fullLayout.height : 330, 360) }); });
  });
  window.addEventListener('afterprint', function () {
    drawn.forEach(function (el) { Plotly.relayout(el, { width: null, autosize: true }); });
  });
})();
`;

/**
 * The whole page as one HTML string. The plotting bundle and start-up script are
 * included only when there are plots. Every text in `spec` is escaped; plot data goes
 * as JSON in a <script type="application/json"> block (jsonForScript) and is parsed
 * in the page, never pasted into code.
 */
export function renderPage(spec: PageSpec): string {
  const hasPlots = spec.plots.length > 0;
  const top = html`<!DOCTYPE html>
    <html lang="en" data-report-kind="${spec.kind}">
      <head>
        <meta charset="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <meta http-equiv="Content-Security-Policy" content="${CSP}" />
        <title>${spec.title}</title>
        <style>
          ${rawHtml(STYLE)}
        </style>
      </head>
      <body>
        <header class="top">
          <p class="what">
            dithercav ·
            ${
              spec.kind === 'run'
                ? 'single run'
                : spec.kind === 'sweep'
                  ? 'parameter map'
                  : spec.kind === 'compare'
                    ? 'waveform comparison'
                    : 'batch overview'
            }
          </p>
          <h1>${spec.heading}</h1>
          <p class="sub">${spec.subheading}</p>
        </header>
        <main>${cautionBox()} ${spec.body}</main>
        <footer>${spec.footer}</footer>
      </body>
    </html> `.text;
  if (!hasPlots) return `${top}</body>\n</html>\n`;
  // Concatenated, not substituted: the bundle holds "$&"-like sequences that a replacement
  // string would expand, and a marker could be forged by a scenario name.
  return (
    top +
    `<script type="application/json" id="report-data">${jsonForScript({ plots: spec.plots })}</script>\n` +
    '<script>' +
    plotlyBundle() +
    '</script>\n' +
    `<script>${BOOT}</script>\n</body>\n</html>\n`
  );
}
