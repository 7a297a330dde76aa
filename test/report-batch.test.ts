import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { scratchDir } from './fixtures/scratch';
import { reportHref, writeBatchIndexHtml } from '../src/report';
import { writeBatchFolder } from './fixtures/report/make-fixtures';

const root = scratchDir('report-batch');

describe('batch index page', () => {
  const dir = join(root, 'batch');
  const index = writeBatchFolder(dir);
  const out = writeBatchIndexHtml(dir, index);
  const page = readFileSync(out, 'utf8');

  it('is index.html in the batch folder and lists every entry, failures included', () => {
    expect(out).toBe(join(dir, 'index.html'));
    const rows = page.match(/<tr class="(flag)?">/g) ?? [];
    expect(rows).toHaveLength(index.length);
    for (const e of index) expect(page).toContain(`<code>${e.file}</code>`);
  });

  it('links each finished entry to its own report by a relative, percent-encoded path', () => {
    expect(page).toContain('<a href="alpha/report.html">layout-fixture-alpha</a>');
    expect(page).toContain('<a href="odd%20name/report.html">');
    expect(page).toContain('<a href="map-beta/report.html">layout-fixture-beta</a>');
    expect(page).not.toMatch(/href="\//);
  });

  it('shows class and key figures, and a dash for a figure not computed', () => {
    const alpha = page.slice(
      page.indexOf('alpha/report.html'),
      page.indexOf('</tr>', page.indexOf('alpha/report.html')),
    );
    expect(alpha).toContain('>decoupled</span>');
    expect(alpha).toContain(
      '<td class="num">2.3x</td><td class="num">3.1x</td><td class="num">4 %</td><td class="num">0</td>',
    );
    const odd = page.slice(page.indexOf('odd%20name'), page.indexOf('</tr>', page.indexOf('odd%20name')));
    expect(odd).toContain('<td class="num nc">—</td>'); // gain_over_static: null
  });

  it('gives the message of every failure, escaped', () => {
    expect(page).toContain('layout fixture: step size collapsed at t = 1.2 us');
    expect(page).toContain('found &#39;&lt;b&gt;long&lt;/b&gt;&#39;');
    expect(page).toContain('<b>bad input</b>');
    expect(page).toContain('<b>failed</b>');
  });

  it('shows a scenario named <script>alert(1)</script> as text and carries no script', () => {
    expect(page).not.toMatch(/<script/i);
    expect(page).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
  });
});

describe('links to member reports', () => {
  it('refuses folders that are absolute or climb out of the batch folder', () => {
    expect(reportHref('/etc')).toBeNull();
    expect(reportHref('C:\\x')).toBeNull();
    expect(reportHref('a/../../b')).toBeNull();
    expect(reportHref('')).toBeNull();
    expect(reportHref(null)).toBeNull();
  });

  it('cannot be turned into a script URL or leave its attribute', () => {
    expect(reportHref('javascript:alert(1)')).toBe('javascript%3Aalert(1)/report.html');
    expect(reportHref('a"b<c')).toBe('a%22b%3Cc/report.html');
    expect(reportHref('sub/dir')).toBe('sub/dir/report.html');
  });
});
