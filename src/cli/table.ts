/** Plain-text table with a header rule, columns padded to their widest cell. */
export function formatTable(headers: readonly string[], rows: ReadonlyArray<readonly (string | number)[]>): string {
  const cells = [headers, ...rows.map((r) => r.map(String))];
  const widths = headers.map((_, c) => Math.max(...cells.map((r) => (r[c] ?? '').length)));
  const line = (r: readonly string[]) =>
    r
      .map((cell, c) => cell.padEnd(widths[c] ?? 0))
      .join('  ')
      .trimEnd();
  return [line(headers), widths.map((w) => '-'.repeat(w)).join('  '), ...cells.slice(1).map(line)].join('\n') + '\n';
}

/** Wraps prose at word boundaries for an 80-column terminal. */
export function wrap(text: string, width = 78): string {
  const lines: string[] = [];
  let current = '';
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (current && current.length + 1 + word.length > width) {
      lines.push(current);
      current = word;
    } else current = current ? `${current} ${word}` : word;
  }
  if (current) lines.push(current);
  return lines.join('\n') + '\n';
}

/** A JSON document on stdout: two-space indent and a final newline. */
export function jsonOut(value: unknown): string {
  return `${JSON.stringify(value, null, 2)}\n`;
}
