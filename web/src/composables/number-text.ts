/** Four significant figures: enough for any bench measurement, short enough to read in a form field. */
export function numberText(value: number): string {
  if (!Number.isFinite(value)) return ''
  return String(Number(value.toPrecision(4)))
}

/** A typed number (a comma works as the decimal mark too); NaN when the text is not a number. */
export function parseNumberText(text: string): number {
  const trimmed = text.trim().replace(',', '.')
  if (trimmed === '') return Number.NaN
  return Number(trimmed)
}
