import { evaluate, unit as mathUnit } from 'mathjs'
import { describe, expect, it } from 'vitest'
import {
  displayUnits,
  formatQuantity,
  fromDisplay,
  fromSI,
  toDisplay,
  toSI,
  unitSymbol,
  units,
  type Quantity,
  type UnitName,
  type UnitSystem,
} from '../src/index.ts'
import { expectClose } from './expect-close.ts'

interface Reference {
  /** SI value of one unit, with its source. */
  si: number
  source: string
  /** The same unit as mathjs spells it, and the SI unit to read it in (null: a plain number). */
  mathjs: { expr: string; si: string | null } | { value: () => number }
}

const SP811 = 'NIST SP 811 (2008), App. B.8'
const PREFIX = 'SI prefix, exact (NIST SP 811 §4.3)'

/** Every unit of units.ts with its reference value; a unit added there without one fails the first test. */
const references: Record<UnitName, Reference> = {
  Pa: { si: 1, source: 'SI unit', mathjs: { expr: '1 Pa', si: 'Pa' } },
  kPa: { si: 1e3, source: PREFIX, mathjs: { expr: '1 kPa', si: 'Pa' } },
  MPa: { si: 1e6, source: PREFIX, mathjs: { expr: '1 MPa', si: 'Pa' } },
  bar: { si: 1e5, source: `${SP811}, exact`, mathjs: { expr: '1 bar', si: 'Pa' } },
  psi: { si: 6894.757, source: SP811, mathjs: { expr: '1 psi', si: 'Pa' } },
  // mathjs has no inch of mercury: 25.4 of its mmHg (133.322 Pa, rounded there to 6 digits).
  inHg: { si: 3386.389, source: `${SP811}, conventional, 0 °C`, mathjs: { expr: '25.4 mmHg', si: 'Pa' } },
  m: { si: 1, source: 'SI unit', mathjs: { expr: '1 m', si: 'm' } },
  mm: { si: 1e-3, source: PREFIX, mathjs: { expr: '1 mm', si: 'm' } },
  in: { si: 0.0254, source: `${SP811}, exact`, mathjs: { expr: '1 inch', si: 'm' } },
  N: { si: 1, source: 'SI unit', mathjs: { expr: '1 N', si: 'N' } },
  lbf: { si: 4.448222, source: SP811, mathjs: { expr: '1 lbf', si: 'N' } },
  NPerM: { si: 1, source: 'SI unit', mathjs: { expr: '1 N/m', si: 'N/m' } },
  NPerMm: { si: 1e3, source: PREFIX, mathjs: { expr: '1 N/mm', si: 'N/m' } },
  lbfPerIn: { si: 175.1268, source: SP811, mathjs: { expr: '1 lbf/inch', si: 'N/m' } },
  K: { si: 1, source: 'SI unit', mathjs: { expr: '1 K', si: 'K' } },
  degC: { si: 1, source: 'NIST SP 811 §4.2.1.1 (difference of 1 °C = 1 K)', mathjs: { expr: '1 degC', si: 'K' } },
  degF: { si: 5 / 9, source: `${SP811} (B.9: a difference of 1 °F = 1/1.8 K)`, mathjs: { expr: '1 degF', si: 'K' } },
  m2: { si: 1, source: 'SI unit', mathjs: { expr: '1 m^2', si: 'm^2' } },
  mm2: { si: 1e-6, source: PREFIX, mathjs: { expr: '1 mm^2', si: 'm^2' } },
  cm2: { si: 1e-4, source: PREFIX, mathjs: { expr: '1 cm^2', si: 'm^2' } },
  in2: { si: 6.4516e-4, source: `${SP811}, exact`, mathjs: { expr: '1 inch^2', si: 'm^2' } },
  m3: { si: 1, source: 'SI unit', mathjs: { expr: '1 m^3', si: 'm^3' } },
  L: { si: 1e-3, source: 'NIST SP 811 Table 6, exact', mathjs: { expr: '1 L', si: 'm^3' } },
  cm3: { si: 1e-6, source: PREFIX, mathjs: { expr: '1 cm^3', si: 'm^3' } },
  in3: { si: 1.638706e-5, source: SP811, mathjs: { expr: '1 inch^3', si: 'm^3' } },
  m3PerS: { si: 1, source: 'SI unit', mathjs: { expr: '1 m^3/s', si: 'm^3/s' } },
  LPerMin: { si: 1.666667e-5, source: `${SP811} (liter per minute)`, mathjs: { expr: '1 L/min', si: 'm^3/s' } },
  // A free-air flow: the factor is that of cubic feet per minute; standard conditions are a separate matter.
  scfm: { si: 4.719474e-4, source: `${SP811} (cubic foot per minute)`, mathjs: { expr: '1 ft^3/min', si: 'm^3/s' } },
  kg: { si: 1, source: 'SI unit', mathjs: { expr: '1 kg', si: 'kg' } },
  g: { si: 1e-3, source: PREFIX, mathjs: { expr: '1 g', si: 'kg' } },
  lb: { si: 0.45359237, source: `${SP811}, avoirdupois, exact`, mathjs: { expr: '1 lbm', si: 'kg' } },
  kgPerS: { si: 1, source: 'SI unit', mathjs: { expr: '1 kg/s', si: 'kg/s' } },
  gPerS: { si: 1e-3, source: PREFIX, mathjs: { expr: '1 g/s', si: 'kg/s' } },
  lbPerMin: { si: 7.559873e-3, source: SP811, mathjs: { expr: '1 lbm/min', si: 'kg/s' } },
  radPerS: { si: 1, source: 'SI unit', mathjs: { expr: '1 rad/s', si: 'rad/s' } },
  // mathjs has no rpm; one cycle per minute is the same revolution.
  rpm: { si: 0.1047198, source: `${SP811} (revolution per minute)`, mathjs: { expr: '1 cycle/min', si: 'rad/s' } },
  s: { si: 1, source: 'SI unit', mathjs: { expr: '1 s', si: 's' } },
  ms: { si: 1e-3, source: PREFIX, mathjs: { expr: '1 ms', si: 's' } },
  ratio: { si: 1, source: 'a plain number', mathjs: { expr: '1 m/m', si: null } },
  percent: { si: 0.01, source: 'NIST SP 811 §7.10.2 (% = 0.01)', mathjs: { value: () => evaluate('1%') as number } },
}

/** SP 811 prints seven significant figures: half a unit in the last place. */
const SP811_REL = 5e-7
/** Agreement with mathjs: its mmHg carries six digits (3e-6 off the conventional value), its psi about eleven. */
const mathjsRel = (name: UnitName) => (name === 'inHg' ? 5e-6 : 1e-9)

const names = Object.keys(units) as UnitName[]

function mathjsSI(ref: Reference): number {
  if ('value' in ref.mathjs) return ref.mathjs.value()
  const u = mathUnit(ref.mathjs.expr)
  return ref.mathjs.si === null ? u.toNumber() : u.toNumber(ref.mathjs.si)
}

describe('unit factors', () => {
  it('has a reference for every unit of the conversion module', () => {
    expect(Object.keys(references).sort()).toEqual([...names].sort())
  })

  for (const name of names) {
    const ref = references[name]
    const u = units[name]
    it(`${name} = ${ref.si} SI (${ref.source}), and agrees with mathjs`, () => {
      // Temperatures carry an offset: the factor is the size of one degree.
      const oneUnit = toSI(u, 1) - toSI(u, 0)
      expectClose(oneUnit, ref.si, SP811_REL * ref.si, `${name} against ${ref.source}`)
      const other = mathjsSI(ref)
      const mathjsOne = name === 'degC' || name === 'degF' ? other - mathUnit(0, name).toNumber('K') : other
      expectClose(oneUnit, mathjsOne, mathjsRel(name) * ref.si, `${name} against mathjs`)
    })
  }

  it('places the temperature zeros: 0 °C = 273.15 K, 32 °F = 0 °C, −40 °F = −40 °C (NIST SP 811 B.9)', () => {
    expectClose(toSI(units.degC, 0), 273.15, 1e-12, '0 °C in K')
    expectClose(toSI(units.degF, 32), 273.15, 1e-12, '32 °F in K')
    expectClose(fromSI(units.degC, toSI(units.degF, -40)), -40, 1e-12, '−40 °F in °C')
    for (const f of [-40, 0, 68, 212, 1700]) {
      expectClose(toSI(units.degF, f), mathUnit(f, 'degF').toNumber('K'), 1e-9, `${f} °F against mathjs`)
    }
  })

  it('makes the pound-force from the pound and standard gravity, and the psi from it (NIST SP 811 B.8)', () => {
    expectClose(toSI(units.lbf, 1), 0.45359237 * 9.80665, 1e-15, 'lbf, N')
    expectClose(toSI(units.psi, 1), toSI(units.lbf, 1) / 0.0254 ** 2, 1e-9, 'psi, Pa')
  })
})

describe('toSI and fromSI', () => {
  const samples = [-273.15, -12.5, 0, 1, 3.75, 1234.5678, 9.9e6]
  for (const name of names) {
    it(`round-trips ${name}`, () => {
      const u = units[name]
      for (const v of samples) {
        expectClose(fromSI(u, toSI(u, v)), v, 1e-12 * Math.max(1, Math.abs(v)), `${name} at ${v}`)
        expectClose(toSI(u, fromSI(u, v)), v, 1e-12 * Math.max(1, Math.abs(v)), `${name} from SI ${v}`)
      }
    })
  }
})

describe('display in the user\'s unit system', () => {
  const quantities = Object.keys(displayUnits.us) as Quantity[]
  const systems: UnitSystem[] = ['us', 'metric']

  it('round-trips every quantity in both systems', () => {
    for (const system of systems) {
      for (const q of quantities) {
        for (const si of [0, 0.5, 137_895.1]) {
          expectClose(fromDisplay(q, system, toDisplay(q, system, si)), si, 1e-9 * Math.max(1, si), `${q} in ${system}`)
        }
      }
    }
  })

  it('formats boost as psi or kPa, to a tenth', () => {
    const tenPsi = toSI(units.psi, 10)
    expect(formatQuantity('pressure', 'us', tenPsi)).toBe('10.0 psi')
    expect(formatQuantity('pressure', 'metric', tenPsi)).toBe('68.9 kPa')
    expect(unitSymbol('pressure', 'us')).toBe('psi')
    expect(unitSymbol('pressure', 'metric')).toBe('kPa')
  })

  it('formats temperatures with their offsets: 20 °C is 68 °F', () => {
    expect(formatQuantity('temperature', 'us', 293.15)).toBe('68 °F')
    expect(formatQuantity('temperature', 'metric', 293.15)).toBe('20 °C')
  })

  it('formats forces, lengths, spring rates, areas and volumes in each system', () => {
    expect(formatQuantity('force', 'us', toSI(units.lbf, 29))).toBe('29.0 lbf')
    expect(formatQuantity('force', 'metric', toSI(units.lbf, 29))).toBe('129 N')
    expect(formatQuantity('length', 'us', 0.0254)).toBe('1.000 in')
    expect(formatQuantity('length', 'metric', 0.0254)).toBe('25.40 mm')
    expect(formatQuantity('springRate', 'us', toSI(units.lbfPerIn, 20))).toBe('20.0 lbf/in')
    expect(formatQuantity('springRate', 'metric', toSI(units.lbfPerIn, 20))).toBe('3.50 N/mm')
    expect(formatQuantity('area', 'us', toSI(units.in2, 3.5))).toBe('3.500 in²')
    expect(formatQuantity('area', 'metric', toSI(units.in2, 3.5))).toBe('2258.1 mm²')
    expect(formatQuantity('volume', 'metric', 0.0046)).toBe('4.60 L')
    expect(formatQuantity('gasMass', 'us', 0.0123)).toBe('12 g')
  })

  it('shows a plain ratio without a symbol, and takes explicit digits', () => {
    expect(formatQuantity('ratio', 'us', 1.5)).toBe('1.50')
    expect(formatQuantity('pressure', 'us', toSI(units.psi, 11.234), 3)).toBe('11.234 psi')
  })
})
