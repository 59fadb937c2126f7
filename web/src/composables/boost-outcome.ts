import type { BoostOutcome } from '@crackpoint/sim-core'

export interface OutcomeWords {
  /** The figure, or the plain-words state in its place. */
  headline: string
  /** A sentence explaining a state that has no figure. */
  detail: string | null
  opens: boolean
}

function sentence(text: string): string {
  const trimmed = text.trim()
  return trimmed ? `${trimmed.charAt(0).toUpperCase()}${trimmed.slice(1)}.` : ''
}

/** Crack or full-open boost in words a builder reads at a glance; never a negative or infinite number. */
export function outcomeWords(outcome: BoostOutcome, formatPressure: (pa: number) => string): OutcomeWords {
  switch (outcome.status) {
    case 'opens':
      return { headline: formatPressure(outcome.boostPa), detail: null, opens: true }
    case 'never-opens':
      return { headline: 'Never opens', detail: sentence(outcome.reason), opens: false }
    case 'open-at-zero-boost':
      return {
        headline: 'Open at zero boost',
        detail: 'The valve is off its seat before any boost builds: the spring is too weak for this arrangement.',
        opens: false,
      }
  }
}
