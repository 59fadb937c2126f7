import { describe, expect, it } from 'vitest'
import { formatField, type FieldQuantity } from '@/composables/field-units'
import { describeField, describeIssue, displayIssue } from '@/composables/scenario-fields'

const inUs = (quantity: FieldQuantity, si: number) => formatField(quantity, 'us', si)
const inMetric = (quantity: FieldQuantity, si: number) => formatField(quantity, 'metric', si)

describe('displayIssue', () => {
  it('words an SI limit in the unit the field shows', () => {
    // 0.1 m = 3.937 in (1 in = 0.0254 m exactly, NIST SP 811) = 100 mm.
    expect(displayIssue('must be at most 0.1', 'length', inUs)).toBe('must be at most 3.937 in')
    expect(displayIssue('must be at most 0.1', 'length', inMetric)).toBe('must be at most 100.00 mm')
    expect(displayIssue('must be greater than 0', 'force', inUs)).toBe('must be greater than 0.0 lbf')
    // A fraction of 1 is shown as 100 %.
    expect(displayIssue('must be at most 1', 'percent', inUs)).toBe('must be at most 100 %')
  })

  it('names another field by its label rather than its path', () => {
    expect(displayIssue('must be larger than wastegate.shaftDiameterM', 'length', inUs)).toBe(
      'must be larger than the shaft diameter',
    )
    expect(displayIssue('must be larger than engine.rpmStart', 'rpm', inUs)).toBe('must be larger than the pull start speed')
  })

  it('leaves a message without a limit as it is', () => {
    expect(displayIssue('must be a number', 'pressure', inUs)).toBe('must be a number')
  })
})

describe('describeField', () => {
  it('names a nested spring by its place', () => {
    expect(describeField('springs.0.seatForceN')?.name).toBe('Spring seat force')
    expect(describeField('springs.2.benchCrackPressurePa')?.name).toBe('Nested spring 3 bench crack pressure')
    expect(describeField('springs.1.colour')).toBeNull()
  })

  it('names a problem with no field of its own by its section', () => {
    expect(describeIssue({ path: 'springs', message: 'takes at most 3 nested springs' }, inUs)).toEqual({
      path: 'springs',
      label: 'Springs',
      message: 'takes at most 3 nested springs',
    })
  })
})
