// Plain-text tables for the terminal: a header row, a rule, and columns padded to their widest cell.

export type Align = 'left' | 'right';

export interface Column {
  header: string;
  align?: Align;
}

/** Lays out rows under headers; every line is indented by `indent` spaces. */
export function renderTable(columns: Column[], rows: string[][], indent = 2): string {
  const widths = columns.map((c, i) => Math.max(width(c.header), ...rows.map((r) => width(r[i] ?? ''))));
  const pad = ' '.repeat(indent);
  const line = (cells: string[]) =>
    pad +
    cells
      .map((cell, i) => (columns[i].align === 'right' ? padStart(cell, widths[i]) : padEnd(cell, widths[i])))
      .join('  ')
      .trimEnd();
  const out = [line(columns.map((c) => c.header)), pad + widths.map((w) => '─'.repeat(w)).join('  ')];
  for (const r of rows) out.push(line(columns.map((_, i) => r[i] ?? '')));
  return out.join('\n');
}

// Code points, not UTF-16 units, so that µ, − and ² count as one column.
function width(s: string): number {
  return Array.from(s).length;
}
function padStart(s: string, w: number): string {
  return ' '.repeat(Math.max(0, w - width(s))) + s;
}
function padEnd(s: string, w: number): string {
  return s + ' '.repeat(Math.max(0, w - width(s)));
}
