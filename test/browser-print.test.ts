/**
 * The reports printed to A4 PDF by headless Chromium (Page.printToPDF over the DevTools
 * pipe, test/fixtures/report/cdp.ts), the PDF read back page by page with poppler's
 * pdftotext. Checked, for a run report (layout fixture) and the committed example sweep:
 * - every figure's title, its plot (the plot's x-axis title, which exists in the PDF only
 *   when the plot was drawn) and its caption are on one page, so no page starts with an
 *   orphaned caption and no title is left at the foot of the page before its plot;
 * - every table starts on the page of its heading;
 * - every section heading is on the page of what follows it.
 * The map legends (the reachable region, curves below or beyond the grid) are checked in
 * the drawn page too.
 *
 * Skipped with a loud warning when Chromium or pdftotext is missing, except under CI=true,
 * where a missing tool is a failure (.ci/run installs both).
 */
import { spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { rebuildReport } from '../src/report';
import { findChromium, PipeBrowser } from './fixtures/report/cdp';
import { writeAllFixtures } from './fixtures/report/make-fixtures';

const chromium = findChromium();
const pdftotext = spawnSync('pdftotext', ['-v'], { encoding: 'utf8' }).error ? null : 'pdftotext';
const onCI = process.env.CI === 'true';
const outputDir = join(__dirname, 'output');

if (!chromium || !pdftotext) {
  console.warn(
    `\n*** browser-print: ${!chromium ? 'no Chromium' : 'no pdftotext (poppler-utils)'} found; the A4 print test is SKIPPED. ` +
      'Install with `apt-get install -y chromium poppler-utils`. ***\n',
  );
}

describe.runIf((!chromium || !pdftotext) && onCI)('print tools available under CI', () => {
  it('has Chromium and pdftotext installed (CI=true requires the print test)', () => {
    expect(chromium, 'Chromium is missing').not.toBeNull();
    expect(pdftotext, 'pdftotext (poppler-utils) is missing').not.toBeNull();
  });
});

/** What the page says it holds, read in the browser after the plots are drawn. */
interface Layout {
  figures: { id: string; title: string; caption: string; xtitle: string; drawn: boolean }[];
  tables: { heading: string; first: string }[];
  headings: { heading: string; next: string }[];
  legends: Record<string, string[]>;
}

const COLLECT = `(() => {
  const norm = (t) => (t || '').replace(/\\s+/g, ' ').trim();
  const figures = Array.from(document.querySelectorAll('figure.plot-box')).map((f) => {
    const el = f.querySelector('.plot');
    const lay = el && el.layout ? el.layout : {};
    const xt = lay.xaxis && lay.xaxis.title ? (typeof lay.xaxis.title === 'string' ? lay.xaxis.title : lay.xaxis.title.text) : '';
    return {
      id: el ? el.id : '',
      title: norm(f.querySelector('.fig-title') && f.querySelector('.fig-title').textContent),
      caption: norm(f.querySelector('figcaption') && f.querySelector('figcaption').textContent),
      xtitle: norm(xt),
      drawn: !!(el && el.querySelector('svg.main-svg')),
    };
  });
  const tables = [];
  const headings = [];
  document.querySelectorAll('main section').forEach((sec) => {
    let last = '';
    sec.querySelectorAll('h2, h3, table').forEach((e) => {
      if (e.tagName === 'TABLE') {
        // the first cell of the body (a narrow header cell may wrap into columns in the PDF's
        // text), its first dozen characters (before the cell wraps)
        const rows = e.tBodies.length > 0 ? e.tBodies[0].rows : e.rows;
        const cells = rows.length > 0 ? Array.from(rows[0].cells) : [];
        const cell = cells.find((c) => norm(c.textContent) !== '');
        if (last && cell) tables.push({ heading: last, first: norm(cell.textContent).slice(0, 12) });
      } else last = norm(e.textContent);
    });
    const h2 = sec.querySelector('h2');
    // the first piece of text after the heading: a leaf element (no element children)
    const after = h2 ? Array.from(sec.querySelectorAll('*')).filter((e) => h2.compareDocumentPosition(e) & Node.DOCUMENT_POSITION_FOLLOWING) : [];
    const leaf = after.find(
      (e) => e.children.length === 0 && norm(e.textContent) !== '' && !e.closest('.plot') && !e.closest('thead'),
    );
    if (h2 && leaf) headings.push({ heading: norm(h2.textContent), next: norm(leaf.textContent).slice(0, 12) });
  });
  const legends = {};
  document.querySelectorAll('.js-plotly-plot').forEach((el) => {
    legends[el.id] = Array.from(el.querySelectorAll('.legend .legendtext')).map((t) => norm(t.textContent));
  });
  return { figures, tables, headings, legends };
})()`;

/** Text for matching: all white space removed, so a line wrapped by the PDF still matches. */
const squeeze = (t: string) => t.replace(/\s+/g, '');

/** The first page at or after `from` whose text holds `text`; -1 when none. */
function pageOf(pages: string[], text: string, from = 0): number {
  const t = squeeze(text);
  for (let p = from; p < pages.length; p++) if (pages[p].includes(t)) return p;
  return -1;
}

describe.skipIf(!chromium || !pdftotext)('reports printed to A4 PDF in headless Chromium', () => {
  let browser: PipeBrowser;
  let root: string;
  let dirs: Record<string, string>;

  beforeAll(() => {
    root = mkdtempSync(join(tmpdir(), 'dithercav-print-'));
    dirs = writeAllFixtures(root);
    dirs.example = join(root, 'example-sweep');
    cpSync(join(__dirname, '..', 'reports', 'example', 'demo-sweep'), dirs.example, { recursive: true });
    for (const d of [dirs.run, dirs.example]) rebuildReport(d);
    mkdirSync(outputDir, { recursive: true });
    browser = PipeBrowser.launch(chromium!);
  });

  afterAll(async () => {
    if (browser) await browser.close();
    if (root) rmSync(root, { recursive: true, force: true });
  });

  /** Print the report in `dir` to PDF; its layout as the page reports it and the text of each PDF page. */
  async function print(dir: string, name: string): Promise<{ layout: Layout; pages: string[] }> {
    const { session } = await browser.open(pathToFileURL(join(dir, 'report.html')).href, 1200, 500);
    const layout = await browser.evaluate<Layout>(session, COLLECT);
    const { data } = await browser.send<{ data: string }>(
      'Page.printToPDF',
      { preferCSSPageSize: true, printBackground: true, displayHeaderFooter: false },
      session,
    );
    const pdf = join(outputDir, `print-${name}.pdf`);
    writeFileSync(pdf, Buffer.from(data, 'base64'));
    const r = spawnSync(pdftotext!, ['-enc', 'UTF-8', pdf, '-'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    // pdftotext ends every page with a form feed
    const pages = r.stdout.split('\f').map(squeeze);
    while (pages.length > 0 && pages[pages.length - 1] === '') pages.pop();
    return { layout, pages };
  }

  function checkPrinted(layout: Layout, pages: string[]): void {
    expect(pages.length, 'pages printed').toBeGreaterThan(1);
    expect(layout.figures.length, 'figures on the page').toBeGreaterThan(0);
    let cur = 0;
    for (const f of layout.figures) {
      expect(f.drawn, `${f.id} drawn in the page`).toBe(true);
      expect(f.title, `${f.id} has a title`).not.toBe('');
      expect(f.caption, `${f.id} has a caption`).not.toBe('');
      const pt = pageOf(pages, f.title, cur);
      expect(pt, `title of ${f.id} ("${f.title}") printed`).toBeGreaterThanOrEqual(0);
      // the caption is the figure's last line: on the title's page, not the next one
      expect(pageOf(pages, f.caption.slice(0, 60), pt), `caption of ${f.id} on the page of its title`).toBe(
        pt,
      );
      // the plot's own axis title is in the PDF only when the plot was drawn there
      expect(pages[pt].includes(squeeze(f.xtitle)), `plot ${f.id} drawn on the page of its title`).toBe(true);
      cur = pt;
    }
    // captions are unique, so the page of each is unambiguous
    const caps = layout.figures.map((f) => f.caption);
    expect(new Set(caps).size).toBe(caps.length);
    cur = 0;
    for (const t of layout.tables) {
      const ph = pageOf(pages, t.heading, cur);
      expect(ph, `table heading "${t.heading}" printed`).toBeGreaterThanOrEqual(0);
      expect(pageOf(pages, t.first, ph), `table under "${t.heading}" starts on its page`).toBe(ph);
      cur = ph;
    }
    cur = 0;
    for (const h of layout.headings) {
      const ph = pageOf(pages, h.heading, cur);
      expect(ph, `section heading "${h.heading}" printed`).toBeGreaterThanOrEqual(0);
      expect(pageOf(pages, h.next, ph), `what follows "${h.heading}" is on its page`).toBe(ph);
      cur = ph;
    }
  }

  it('run report: every figure with its title and caption, every table with its heading', async () => {
    const { layout, pages } = await print(dirs.run, 'run');
    checkPrinted(layout, pages);
    // the headline answers and the glossary are printed
    expect(pageOf(pages, 'How much light is in the gap?')).toBe(0);
    expect(pageOf(pages, 'Words used in this report')).toBeGreaterThan(0);
  });

  it('the committed example sweep prints whole, and its map legends say what is shaded and clipped', async () => {
    const { layout, pages } = await print(dirs.example, 'example-sweep');
    checkPrinted(layout, pages);
    const legend = layout.legends['map-class'];
    expect(legend).toContain('reachable by the actuator (shaded)');
    // the example's hop onset lies on the grid floor at most frequencies
    expect(legend).toContain('hop onset: below the grid');
    expect(legend).toContain('recommended operating point');
    expect(legend.some((t) => t.startsWith('speed rule'))).toBe(true);
  });
});
