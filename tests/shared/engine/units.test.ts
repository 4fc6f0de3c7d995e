import { describe, expect, it } from 'vitest'
import { parseUnit, formulaUnitTable, FORMULA_UNIT_NAMES } from '../../../shared/engine/units'
import { dimName } from '../../../shared/engine/dimensions'

function unit(text: string): { factor: number; dimension: string } {
  const u = parseUnit(text)
  if (!u.ok) throw new Error(u.error)
  return { factor: u.factor, dimension: dimName(u.dim) }
}

describe('parseUnit', () => {
  // SI prefixes: SI Brochure, 9th ed. (2019), Table 7; eV = e·1 V with e exact (CODATA 2018)
  it('parseUnit gives the SI factor and dimension of the display units of DESIGN §6', () => {
    expect(unit('nm')).toEqual({ factor: 1e-9, dimension: 'length' })
    expect(unit('um')).toEqual({ factor: 1e-6, dimension: 'length' })
    expect(unit('µm')).toEqual({ factor: 1e-6, dimension: 'length' })
    expect(unit('eV')).toEqual({ factor: 1.602176634e-19, dimension: 'energy' })
    expect(unit('meV')).toEqual({ factor: 1.602176634e-22, dimension: 'energy' })
    expect(unit('1/cm')).toEqual({ factor: 100, dimension: '1/length' })
    expect(unit('cm^-1')).toEqual({ factor: 100, dimension: '1/length' })
    expect(unit('mA/cm^2')).toEqual({ factor: 10, dimension: 'current density' })
    expect(unit('W/m^2/nm')).toEqual({ factor: 1e9, dimension: 'spectral irradiance' })
    expect(unit('%')).toEqual({ factor: 0.01, dimension: 'dimensionless' })
    expect(unit('K')).toEqual({ factor: 1, dimension: 'temperature' })
  })

  it('parseUnit reads products, quotients, powers and parentheses', () => {
    expect(unit('eV/cm^2')).toEqual({ factor: 1.602176634e-15, dimension: 'energy/area' })
    expect(unit('1/(m^2*s*nm)')).toEqual({ factor: 1e9, dimension: 'spectral photon flux' })
    expect(unit('kg*m^2/s^2')).toEqual({ factor: 1, dimension: 'energy' })
    expect(unit('eV/K')).toEqual({ factor: 1.602176634e-19, dimension: 'energy/temperature' })
    expect(unit('mW/cm^2')).toEqual({ factor: 10, dimension: 'irradiance' })
    expect(unit('Å')).toEqual({ factor: 1e-10, dimension: 'length' })
    expect(unit('')).toEqual({ factor: 1, dimension: 'dimensionless' })
  })

  it('parseUnit reads fractional powers in parentheses and refuses the ambiguous cm^-1/2', () => {
    expect(unit('cm^(-1/2)')).toEqual({ factor: 10, dimension: 'm^-0.5' })
    expect(unit('cm^0.5')).toEqual({ factor: 0.1, dimension: 'm^0.5' })
    const bad = parseUnit('cm^-1/2')
    expect(bad.ok).toBe(false)
    if (!bad.ok) expect(bad.error).toBe('"cm^-1/2" is not understood: a number after "/" following a power is ambiguous: write the power in parentheses, e.g. cm^(-1/2)')
  })

  it('parseUnit reads arbitrary units (a.u., au, counts) as dimensionless numbers', () => {
    for (const t of ['a.u.', 'au', 'arb. u.', 'counts']) expect(unit(t), t).toEqual({ factor: 1, dimension: 'dimensionless' })
  })

  it('parseUnit refuses unknown units, offset temperature scales and non-physical units with a reason', () => {
    const bad = (t: string): string => {
      const u = parseUnit(t)
      return u.ok ? 'ok' : u.error
    }
    expect(bad('flurbs')).toBe('"flurbs" is not a known unit; write units such as nm, eV, 1/cm, mA/cm^2 or W/m^2/nm')
    expect(bad('W/m^2/q')).toBe('"W/m^2/q" contains "q", which is not a known unit')
    expect(bad('degC')).toBe('"degC" is a temperature scale with an offset; write temperatures in K')
    expect(bad('byte')).toBe('"byte" is not a physical unit')
    expect(bad('m^')).toBe('"m^" is not understood: expected a number after ^, or a fraction in parentheses such as ^(1/2)')
    expect(bad('(nm')).toBe('"(nm" is not understood: missing ")"')
  })
})

describe('formulaUnitTable', () => {
  it('formulaUnitTable holds every formula unit name with the same factor as the display unit', () => {
    const table = formulaUnitTable()
    for (const name of FORMULA_UNIT_NAMES) {
      const u = parseUnit(name)
      expect(u.ok, name).toBe(true)
      if (u.ok) expect(table.get(name)?.factor, name).toBe(u.factor)
    }
    expect(table.get('eV')?.factor).toBe(1.602176634e-19)
    expect(table.get('percent')?.factor).toBe(0.01)
  })
})
