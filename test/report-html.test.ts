import { describe, expect, it } from 'vitest';
import {
  escapeHtml,
  html,
  jsonForScript,
  plotlyBundle,
  renderPage,
  cautionBox,
  rawHtml,
} from '../src/report';

const INJECT = '<script>alert(1)</script>';

/** The page without the inlined plotting bundle, so checks look only at what this tool wrote. */
function ownPart(page: string): string {
  return page.replace(plotlyBundle(), '');
}

/** A page of the given kind with nothing in it. */
function emptyPage(kind: 'run' | 'sweep' | 'batch'): string {
  return renderPage({
    kind,
    title: 't',
    heading: 'h',
    subheading: 's',
    body: rawHtml(''),
    plots: [],
    footer: '',
  });
}

describe('escaping of strings from scenarios and results', () => {
  it('html`` escapes every interpolated string, including in attributes', () => {
    const out = html`<p title="${'"x" & \'y\''}">${INJECT}</p>`.text;
    expect(out).toBe('<p title="&quot;x&quot; &amp; &#39;y&#39;">&lt;script&gt;alert(1)&lt;/script&gt;</p>');
  });

  it('nested html`` fragments are inserted once, not escaped twice; arrays are joined', () => {
    const inner = html`<b>${'a<b'}</b>`;
    expect(html`<i>${[inner, 'c>d', null, undefined, false, 3]}</i>`.text).toBe(
      '<i><b>a&lt;b</b>c&gt;d3</i>',
    );
  });

  it('escapeHtml leaves text without special characters alone', () => {
    expect(escapeHtml('plain text 1.5 GHz')).toBe('plain text 1.5 GHz');
  });

  it('jsonForScript writes no "<" (so no value can close the script block) and parses back to the same value', () => {
    const value = {
      name: `${INJECT}</script><!--`,
      sep: 'a\u2028b\u2029c',
      amp: 'x & y > z',
      n: [1.5e-9, null, -3],
    };
    const text = jsonForScript(value);
    expect(text).not.toMatch(/[<>&\u2028\u2029]/);
    // independent expectation: the browser's JSON.parse of the block text must give the value back
    expect(JSON.parse(text)).toEqual(value);
  });
});

describe('page skeleton', () => {
  const page = renderPage({
    kind: 'run',
    title: INJECT,
    heading: INJECT,
    subheading: 'sub',
    body: html`<section><h2>x</h2></section>`,
    plots: [{ id: 'p1', data: [{ type: 'scatter', x: [1, 2], y: [3, 4], name: INJECT }], layout: {} }],
    footer: 'f',
  });
  const own = ownPart(page);

  it('inlines the plotting bundle verbatim (a replacement string would have expanded its "$&" sequences)', () => {
    const js = plotlyBundle();
    expect(js).toContain('$&'); // the pitfall of DEPENDENCIES.md is real for this bundle
    expect(page).toContain(`<script>${js}</script>`);
  });

  it('makes no network request: no external src/href/url(), and a policy forbidding every fetch', () => {
    expect(own).not.toMatch(/\b(src|href)\s*=\s*["']?(https?:)?\/\//i);
    expect(own).not.toMatch(/url\(|@import|<link\b|<img\b|<iframe\b/i);
    // the policy sits in an attribute, so its quotes are written as character references
    expect(own).toContain('http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;;');
  });

  it('shows the scenario text escaped, and passes plot data as JSON in an application/json block', () => {
    expect(own).not.toContain(INJECT);
    expect(own).toContain('<h1>&lt;script&gt;alert(1)&lt;/script&gt;</h1>');
    const m = /<script type="application\/json" id="report-data">([^<]*)<\/script>/.exec(own);
    expect(m).not.toBeNull();
    const data = JSON.parse(m![1]) as { plots: { data: { name: string }[] }[] };
    expect(data.plots[0].data[0].name).toBe(INJECT);
  });

  it('has a print style sheet for A4 that hides the plot tool bar', () => {
    expect(own).toMatch(/@media print[\s\S]*size: A4[\s\S]*\.modebar/);
  });

  it('a page without plots carries no script at all', () => {
    const p = emptyPage('batch');
    expect(p).not.toMatch(/<script/i);
  });
});

describe('laser-safety caution (MODEL.md section 6)', () => {
  it('names watts in the gap against a milliwatt output, the labelled class, IEC 60825, the laser safety officer and high voltage', () => {
    const t = cautionBox().text;
    for (const phrase of [
      'reach watts',
      'milliwatts',
      'labelled hazard class',
      'IEC 60825',
      'laser safety officer',
      'high voltage',
      'does not replace local codes',
    ]) {
      expect(t).toContain(phrase);
    }
  });

  it('is on every kind of page', () => {
    for (const kind of ['run', 'sweep', 'batch'] as const) {
      const p = emptyPage(kind);
      expect(p).toContain('class="caution"');
    }
  });
});
