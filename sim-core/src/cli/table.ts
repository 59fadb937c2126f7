/** A plain-text table: a header row, a rule, then the rows; numbers (and dashes) align right. */
export function renderTable(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)))
  const numeric = header.map((_, i) => rows.length > 0 && rows.every((r) => /^[-−+]?[\d.,]+( \S+)?$|^—$/.test(r[i] ?? '')))
  const line = (cells: readonly string[]) =>
    cells
      .map((c, i) => (numeric[i] ? c.padStart(widths[i] ?? 0) : c.padEnd(widths[i] ?? 0)))
      .join('  ')
      .trimEnd()
  return [line(header), widths.map((w) => '─'.repeat(w)).join('  '), ...rows.map(line)].join('\n')
}

/** Label and value pairs, the labels padded to one width. */
export function renderPairs(pairs: readonly (readonly [string, string])[], indent = '  '): string {
  const width = Math.max(0, ...pairs.map(([label]) => label.length))
  return pairs.map(([label, value]) => `${indent}${label.padEnd(width)}  ${value}`).join('\n')
}
