import { describe, expect, it } from 'vitest'
import {
  compactUnit, dimNoun, dimPhrase, formatNumber, formatPair, formatQuantity, prettyUnit, quantityOf, usualUnit,
} from '../../../shared/engine/describe'
import {
  DIMENSIONLESS, ENERGY, INV_LENGTH, LENGTH, TIME, dimDiv, dimEquals, dimMul, dimPow, namedDim, type Dim,
} from '../../../shared/engine/dimensions'
import { parseFormula } from '../../../shared/engine/parse'
import { sourceOf } from '../../../shared/engine/source'
import { parseUnit } from '../../../shared/engine/units'

const dimOf = (unit: string): Dim => {
  const u = parseUnit(unit)
  if (!u.ok) throw new Error(u.error)
  return u.dim
}

describe('formatNumber (numbers in messages)', () => {
  it('formatNumber(2.3000000000000003) gives "2.3": no floating-point noise', () => {
    expect(formatNumber(2.3000000000000003)).toBe('2.3')
    expect(formatNumber(0.1 + 0.2)).toBe('0.3')
  })

  it('formatNumber rounds to 4 significant digits without trailing zeros', () => {
    expect(formatNumber(1.23456789)).toBe('1.235')
    expect(formatNumber(1.5)).toBe('1.5')
    expect(formatNumber(850)).toBe('850')
    expect(formatNumber(-0.2)).toBe('-0.2')
    expect(formatNumber(0)).toBe('0')
  })

  it('formatNumber writes very large and very small values in exponent form, as formulas take them', () => {
    // the elementary charge, 1.602176634e-19 C (exact, CODATA 2018)
    expect(formatNumber(1.602176634e-19)).toBe('1.602e-19')
    expect(formatNumber(123456789)).toBe('1.235e8')
    expect(formatNumber(-0.00001234)).toBe('-1.234e-5')
    expect(formatNumber(1e6)).toBe('1e6')
  })

  it('formatNumber names non-finite values in words', () => {
    expect(formatNumber(NaN)).toBe('NaN')
    expect(formatNumber(Infinity)).toBe('infinity')
    expect(formatNumber(-Infinity)).toBe('-infinity')
  })

  it('formatNumber(x, digits) takes more digits where a message repeats a typed value', () => {
    expect(formatNumber(1.5005, 6)).toBe('1.5005')
  })

  it('formatPair adds digits until two different numbers read differently', () => {
    expect(formatPair(1.4999996, 1.5)).toEqual(['1.4999996', '1.5'])
    expect(formatPair(1.4, 1.5)).toEqual(['1.4', '1.5'])
    expect(formatPair(2, 2)).toEqual(['2', '2'])
  })
})

describe('dimension words for messages', () => {
  it('dimNoun names the quantity with its usual unit', () => {
    expect(dimNoun(ENERGY)).toBe('energy (eV)')
    expect(dimNoun(LENGTH)).toBe('length (nm)')
    expect(dimNoun(INV_LENGTH)).toBe('inverse length (1/cm)')
    expect(dimNoun(TIME)).toBe('time (s)')
    expect(dimNoun(dimOf('Hz'))).toBe('frequency (Hz)')
    expect(dimNoun(dimOf('W'))).toBe('power (W)')
    expect(dimNoun(dimOf('W/m^2'))).toBe('irradiance (W/m²)')
    expect(dimNoun(dimOf('W/m^2/nm'))).toBe('spectral irradiance (W/(m²·nm))')
    expect(dimNoun(dimOf('mA/cm^2'))).toBe('current density (mA/cm²)')
    expect(dimNoun(dimOf('C'))).toBe('charge (C)')
    expect(dimNoun(dimOf('V'))).toBe('voltage (V)')
    expect(dimNoun(dimOf('K'))).toBe('temperature (K)')
    expect(dimNoun(DIMENSIONLESS)).toBe('dimensionless number')
  })

  it('dimNoun takes quantity names beyond the engine\'s own from js-quantities kinds', () => {
    expect(dimNoun(dimOf('Pa'))).toBe('pressure (Pa)')
    expect(dimNoun(dimOf('N'))).toBe('force (N)')
    expect(dimNoun(dimOf('kg/m^3'))).toBe('density (kg/m³)')
  })

  it('dimNoun gives a compact unit expression for a dimension without a name: energy squared is J²', () => {
    expect(dimNoun(dimMul(ENERGY, ENERGY))).toBe('a quantity in J²')
    expect(dimNoun(dimMul(ENERGY, dimMul(TIME, TIME)))).toBe('a quantity in J·s²')
    expect(dimNoun(dimOf('V/m'))).toBe('a quantity in V/m')
  })

  it('dimPhrase puts an article in front, or leaves the unit out', () => {
    expect(dimPhrase(ENERGY)).toBe('an energy (eV)')
    expect(dimPhrase(LENGTH)).toBe('a length (nm)')
    expect(dimPhrase(INV_LENGTH)).toBe('an inverse length (1/cm)')
    expect(dimPhrase(DIMENSIONLESS)).toBe('a dimensionless number')
    expect(dimPhrase(ENERGY, false)).toBe('an energy')
    expect(dimPhrase(dimMul(ENERGY, ENERGY))).toBe('a quantity in J²')
  })

  it('compactUnit writes any dimension as SI units that parseUnit reads back to the same dimension', () => {
    expect(compactUnit(dimMul(ENERGY, ENERGY))).toBe('J^2')
    expect(compactUnit(dimDiv(ENERGY, dimMul(LENGTH, LENGTH)))).toBe('J/m^2')
    expect(compactUnit(dimOf('1/(m^2*s)'))).toBe('1/(m^2*s)')
    expect(compactUnit(DIMENSIONLESS)).toBe('1')
    const samples = [dimPow(ENERGY, 3), dimDiv(TIME, ENERGY), dimOf('W/m^2/nm'), dimOf('A*s/m^3'), dimPow(LENGTH, 0.5), dimOf('K/W')]
    for (const d of samples) expect(dimEquals(dimOf(compactUnit(d)), d), compactUnit(d)).toBe(true)
  })

  it('every usual unit of a named quantity has that quantity\'s dimension', () => {
    const names = ['length', '1/length', 'area', 'volume', '1/area', 'mass', 'time', 'frequency', 'current', 'temperature',
      'amount', 'energy', '1/energy', 'power', 'charge', 'voltage', 'velocity', 'action', 'permittivity', 'current density',
      'irradiance', 'spectral irradiance', 'photon flux', 'spectral photon flux', 'energy/area', 'energy/temperature',
      '1/temperature', 'energy·length']
    for (const name of names) {
      const d = namedDim(name)
      expect(quantityOf(d), name).not.toBeNull()
      expect(dimEquals(dimOf(usualUnit(d)), d), `${name}: ${usualUnit(d)}`).toBe(true)
    }
  })

  it('prettyUnit uses only characters the shipped Fira subsets have: ·, ², ³ and µ, and / for negative powers', () => {
    expect(prettyUnit('W/(m^2*nm)')).toBe('W/(m²·nm)')
    expect(prettyUnit('um^3')).toBe('µm³')
    expect(prettyUnit('J^4')).toBe('J^4')
    expect(prettyUnit('m^0.5')).toBe('m^0.5')
  })
})

describe('formatQuantity (SI values in messages)', () => {
  it('formatQuantity shows an SI value in the usual unit of its dimension', () => {
    // 1.48 eV = 1.48 × 1.602176634e-19 J (exact, CODATA 2018)
    expect(formatQuantity(1.48 * 1.602176634e-19, ENERGY)).toBe('1.48 eV')
    expect(formatQuantity(850e-9, LENGTH)).toBe('850 nm')
    expect(formatQuantity(3e6, INV_LENGTH)).toBe('30000 1/cm')
    expect(formatQuantity(1e-3, dimDiv(dimOf('W'), dimMul(LENGTH, LENGTH)))).toBe('0.001 W/m²')
  })

  it('formatQuantity gives a bare number for dimensionless or unknown values', () => {
    expect(formatQuantity(0.25, DIMENSIONLESS)).toBe('0.25')
    expect(formatQuantity(0.25, null)).toBe('0.25')
  })

  it('formatQuantity falls back to compact SI units for a dimension without a name', () => {
    expect(formatQuantity(2, dimMul(ENERGY, ENERGY))).toBe('2 J²')
  })
})

describe('sourceOf (formula parts quoted in messages)', () => {
  const src = (text: string): string => sourceOf(parseFormula(text))
  it('sourceOf writes a tree back as the formula it came from, brackets only where needed', () => {
    expect(src('Eg + 2*d')).toBe('Eg + 2*d')
    expect(src('(a + b)*c')).toBe('(a + b)*c')
    expect(src('a - (b - c)')).toBe('a - (b - c)')
    expect(src('(a^b)^c')).toBe('(a^b)^c')
    expect(sourceOf(parseFormula('alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 22*meV)'), 60)).toBe('alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 22*meV)')
    expect(src('2e-5*x')).toBe('2e-5*x')
    expect(src('filmB.T > 0.5 ? 1 : -x')).toBe('filmB.T > 0.5 ? 1 : -x')
  })

  it('sourceOf shortens long parts with an ellipsis', () => {
    expect(sourceOf(parseFormula('a1 + a2 + a3 + a4 + a5 + a6 + a7 + a8 + a9 + a10'), 20)).toBe('a1 + a2 + a3 + a4 +…')
  })
})
