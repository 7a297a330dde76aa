/**
 * index.html of a batch: every scenario with its kind, status, class and key figures,
 * a relative link to its own report, and the message of each failure.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { BATCH_FILES, BatchIndexEntry } from '../results/batch';
import { RUN_FILES } from '../results/artifacts';
import { TOOL_VERSION } from '../version';
import { classBadge, classLegend } from './class-style';
import { fmtNum, fmtPercent, fmtRatio, fmtSI, isNum, NOT_COMPUTED } from './format';
import { glossarySection } from './glossary';
import { renderPage } from './html';
import { html, SafeHtml } from './safe-html';

/**
 * Relative URL of an entry's report: each path segment percent-encoded, so a folder
 * name can neither leave the attribute nor become a `javascript:` URL; null for a
 * folder that is absolute or climbs out of the batch folder.
 */
export function reportHref(folder: string | null | undefined): string | null {
  if (typeof folder !== 'string' || folder === '') return null;
  const segs = folder.split(/[\\/]+/).filter((s) => s !== '' && s !== '.');
  if (/^([a-zA-Z]:|[\\/])/.test(folder) || segs.includes('..') || segs.length === 0) return null;
  return [...segs, RUN_FILES.report].map(encodeURIComponent).join('/');
}

function numCell(text: string): SafeHtml {
  return text === NOT_COMPUTED ? html`<td class="num nc">—</td>` : html`<td class="num">${text}</td>`;
}

/** The batch index page as an HTML string (see writeBatchIndexHtml). */
export function buildBatchIndexHtml(index: BatchIndexEntry[], generatedAt: Date = new Date()): string {
  const entries = Array.isArray(index) ? index.filter((e) => e !== null && typeof e === 'object') : [];
  const ok = entries.filter((e) => e.status === 'ok').length;
  const failed = entries.filter((e) => e.status === 'failed').length;
  const bad = entries.filter((e) => e.status === 'bad-input').length;
  const rows = entries.map((e) => {
    const href = reportHref(e.folder);
    const name = String(e.name ?? e.file ?? '');
    const status =
      e.status === 'ok'
        ? html`<td>ok</td>`
        : html`<td><b>${e.status === 'bad-input' ? 'bad input' : 'failed'}</b></td>`;
    const cls =
      e.kind === 'run' && e.status === 'ok'
        ? classBadge(e.class ?? null)
        : e.kind === 'sweep' && e.status === 'ok'
          ? html`<span class="nc">see map</span>`
          : '';
    return html`<tr class="${e.status === 'ok' ? '' : 'flag'}">
      <td>${href ? html`<a href="${href}">${name}</a>` : name}</td>
      <td><code>${String(e.file ?? '')}</code></td>
      <td>${e.kind}</td>
      ${status}
      <td>${cls}</td>
      ${numCell(
        isNum(e.external_mean_W)
          ? `${fmtSI(e.external_mean_W, 'W')}${isNum(e.external_mean_stderr_W) ? ` ± ${fmtSI(e.external_mean_stderr_W, 'W', 2)}` : ''}`
          : NOT_COMPUTED,
      )}${numCell(
        e.drive && isNum(e.drive.amplitude_m)
          ? `${fmtSI(e.drive.amplitude_m, 'm')} at ${fmtSI(e.drive.frequency_Hz, 'Hz')}${e.drive.waveform ? ` (${e.drive.waveform})` : ''}`
          : NOT_COMPUTED,
      )}${numCell(fmtRatio(e.enhancement))}${numCell(fmtRatio(e.gain_over_static))}${numCell(fmtPercent(e.ripple_rel))}${numCell(fmtNum(e.hops_per_s))}
    </tr>`;
  });
  const failures = entries.filter((e) => e.status !== 'ok');
  const body = html`<section id="all">
      <h2>Every scenario in this batch</h2>
      <p class="note">
        ${entries.length} scenario files: ${ok} finished, ${failed} failed, ${bad} with bad input. Names link
        to each scenario's own report. A dash means the figure was not computed.
      </p>
      <table>
        <thead>
          <tr>
            <th>scenario</th>
            <th>file</th>
            <th>kind</th>
            <th>status</th>
            <th>class</th>
            <th class="num">gap power</th>
            <th class="num">drive</th>
            <th class="num">enhancement</th>
            <th class="num">gain over still</th>
            <th class="num">in-band ripple</th>
            <th class="num">hops per s</th>
          </tr>
        </thead>
        <tbody>
          ${rows}
        </tbody>
      </table>
      ${classLegend()}
    </section>
    ${glossarySection(['gap', 'standard error', 'enhancement', 'gain over the mirror held still', 'ripple', 'mode hop', 'recommended operating point'])}
    <section id="failures">
      <h2>What went wrong</h2>
      ${
        failures.length === 0
          ? html`<p class="note">Nothing: every scenario finished.</p>`
          : html`<ul class="warnlist">
              ${failures.map((e) => html`<li><b>${String(e.name ?? '')}</b> (<code>${String(e.file ?? '')}</code>, ${e.status === 'bad-input' ? 'bad input' : 'failed'}):<br /><code>${String(e.error ?? 'no message recorded')}</code></li>`)}
            </ul>`
      }
    </section>`;
  return renderPage({
    kind: 'batch',
    title: 'dithercav batch overview',
    heading: 'Batch overview',
    subheading: `${entries.length} scenarios · ${ok} finished · ${failed + bad} not`,
    body,
    plots: [],
    footer: `Written by dithercav ${TOOL_VERSION} from index.json on ${generatedAt.toISOString()}; nothing was re-simulated.`,
  });
}

/**
 * Write `index.html` into the batch folder `dir` from the batch index (the content of
 * index.json). Returns the path written.
 */
export function writeBatchIndexHtml(dir: string, index: BatchIndexEntry[]): string {
  const out = join(dir, BATCH_FILES.indexHtml);
  writeFileSync(out, buildBatchIndexHtml(index));
  return out;
}
