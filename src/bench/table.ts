/** Plain-text table for the benchmark's terminal output. */

export type TableRow = [string, string, string, string];

/** Columns padded to their widest cell, a rule under the header; returns the text with a final newline. */
export function formatTable(header: TableRow, rows: TableRow[]): string {
  const all = [header, ...rows];
  const width = header.map((_, i) => Math.max(...all.map((r) => r[i].length)));
  const line = (r: TableRow) =>
    r
      .map((c, i) => (i === 0 ? c.padEnd(width[i]) : c.padStart(width[i])))
      .join('  ')
      .trimEnd();
  return `${line(header)}\n${width.map((w) => '-'.repeat(w)).join('  ')}\n${rows.map(line).join('\n')}\n`;
}
