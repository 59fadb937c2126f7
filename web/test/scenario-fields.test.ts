import { describe, expect, it } from 'vitest'
import { formatQuantity, type Quantity } from '@crackpoint/sim-core'
import { displayIssue } from '@/composables/scenario-fields'

const inUs = (quantity: Quantity, si: number) => formatQuantity(quantity, 'us', si)
const inMetric = (quantity: Quantity, si: number) => formatQuantity(quantity, 'metric', si)

describe('displayIssue', () => {
  it('words an SI limit in the unit the field shows', () => {
    // 0.1 m = 3.937 in (1 in = 0.0254 m exactly, NIST SP 811) = 100 mm.
    expect(displayIssue('must be at most 0.1', 'length', inUs)).toBe('must be at most 3.937 in')
    expect(displayIssue('must be at most 0.1', 'length', inMetric)).toBe('must be at most 100.00 mm')
    expect(displayIssue('must be greater than 0', 'force', inUs)).toBe('must be greater than 0.0 lbf')
  })

  it('names another field by its label rather than its path', () => {
    expect(displayIssue('must be larger than wastegate.shaftDiameterM', 'length', inUs)).toBe(
      'must be larger than the shaft diameter',
    )
  })

  it('leaves a message without a limit as it is', () => {
    expect(displayIssue('must be a number', 'pressure', inUs)).toBe('must be a number')
  })
})
