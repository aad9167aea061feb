/** Plain-text tables for terminal output: a header row, a rule, right-aligned numbers. */

export type CellValue = string | number | null | undefined;

/** Formats a number with a fixed count of decimals; null/undefined/non-finite as "-". */
export function fixed(x: number | null | undefined, decimals: number): string {
  return x === null || x === undefined || !Number.isFinite(x) ? '-' : x.toFixed(decimals);
}

/** Columns separated by two spaces; numeric-looking cells right-aligned. Ends with a newline. */
export function textTable(header: readonly string[], rows: readonly (readonly CellValue[])[]): string {
  const text = rows.map((r) => r.map((c) => (c === null || c === undefined ? '-' : String(c))));
  const widths = header.map((h, j) => Math.max(h.length, ...text.map((r) => (r[j] ?? '').length)));
  const numeric = header.map((_, j) => text.length > 0 && text.every((r) => /^[-+]?[\d.,]+%?$|^-$/.test(r[j] ?? '')));
  const line = (cells: readonly string[]) =>
    cells
      .map((c, j) => (numeric[j] ? c.padStart(widths[j]!) : c.padEnd(widths[j]!)))
      .join('  ')
      .trimEnd();
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...text.map(line)].join('\n') + '\n';
}
