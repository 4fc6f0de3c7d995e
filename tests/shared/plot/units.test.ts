import { describe, it, expect } from 'vitest'
import {
  HC_EV_NM,
  canConvert,
  convertValues,
  energyToWavelengthNm,
  isEnergyUnit,
  isWavelengthUnit,
  normalizeUnit,
  prettyUnit,
  spectralQuantity,
  unitInfo,
  wavelengthNmToEnergy,
} from '../../../shared/plot/units'

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b)

describe('HC_EV_NM', () => {
  it('HC_EV_NM matches CODATA 2018 hc = 1.239 841 984… × 10⁻⁶ eV m', () => {
    // CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)), "hc in eV m": 1.239 841 984... e-6 (exact)
    expect(rel(HC_EV_NM, 1239.841984)).toBeLessThan(1e-9)
  })
})

describe('energyToWavelengthNm', () => {
  it('energyToWavelengthNm(1.12) puts the Si band gap near 1107 nm', () => {
    // Eg(Si, 300 K) = 1.12 eV: Sze & Ng, Physics of Semiconductor Devices, 3rd ed., Appendix G
    expect(energyToWavelengthNm(1.12)).toBeCloseTo(1107.0018, 3)
  })
  it('energyToWavelengthNm(E) is the exact inverse of wavelengthNmToEnergy', () => {
    expect(rel(wavelengthNmToEnergy(energyToWavelengthNm(1.48)), 1.48)).toBeLessThan(1e-15)
    expect(energyToWavelengthNm(HC_EV_NM)).toBe(1)
  })
  it('energyToWavelengthNm gives NaN for zero and negative energies', () => {
    expect(energyToWavelengthNm(0)).toBeNaN()
    expect(wavelengthNmToEnergy(-5)).toBeNaN()
  })
})

describe('spectralQuantity', () => {
  it('spectralQuantity(unit) reads energy, wavelength, wavenumber and frequency units', () => {
    expect(spectralQuantity('eV')).toBe('energy')
    expect(spectralQuantity('meV')).toBe('energy')
    expect(spectralQuantity('nm')).toBe('wavelength')
    expect(spectralQuantity('µm')).toBe('wavelength')
    expect(spectralQuantity('um')).toBe('wavelength')
    expect(spectralQuantity('1/cm')).toBe('wavenumber')
    expect(spectralQuantity('cm⁻¹')).toBe('wavenumber')
    expect(spectralQuantity('THz')).toBe('frequency')
  })
  it('spectralQuantity(unit) is null for non-spectral and unknown units', () => {
    expect(spectralQuantity('%')).toBeNull()
    expect(spectralQuantity('mA/cm^2')).toBeNull()
    expect(spectralQuantity('furlong')).toBeNull()
    expect(spectralQuantity(undefined)).toBeNull()
    expect(spectralQuantity('')).toBeNull()
  })
  it('isWavelengthUnit and isEnergyUnit tell the two axes apart', () => {
    expect(isWavelengthUnit('nm')).toBe(true)
    expect(isWavelengthUnit('eV')).toBe(false)
    expect(isEnergyUnit('eV')).toBe(true)
    expect(isEnergyUnit('K')).toBe(false)
  })
})

describe('convertValues', () => {
  it('convertValues([1], "eV", "1/cm") gives 8065.5439 cm⁻¹', () => {
    // CODATA 2018 electron volt–inverse metre relationship: 806 554.3937… m⁻¹ (exact)
    const r = convertValues([1], 'eV', '1/cm')
    expect(r.ok && rel(r.value[0], 8065.543937)).toBeLessThan(1e-9)
  })
  it('convertValues([1], "eV", "THz") gives 241.798 924 2 THz', () => {
    // CODATA 2018 electron volt–hertz relationship: 2.417 989 242… × 10¹⁴ Hz (exact)
    const r = convertValues([1], 'eV', 'THz')
    expect(r.ok && rel(r.value[0], 241.7989242)).toBeLessThan(1e-9)
  })
  it('convertValues between eV and nm follows λ = hc/E and keeps gaps for E ≤ 0', () => {
    const r = convertValues([1.48, 0, -1], 'eV', 'nm')
    expect(r.ok).toBe(true)
    if (!r.ok) return
    expect(r.value[0]).toBeCloseTo(837.7311, 3)
    expect(r.value[1]).toBeNaN()
    expect(r.value[2]).toBeNaN()
  })
  it('convertValues scales within one dimension: nm → um, meV → eV, % → fraction', () => {
    const a = convertValues([850], 'nm', 'um')
    expect(a.ok && a.value[0]).toBeCloseTo(0.85, 12)
    const b = convertValues([22], 'meV', 'eV')
    expect(b.ok && b.value[0]).toBeCloseTo(0.022, 14)
    const c = convertValues([45], '%', '1')
    expect(c.ok && c.value[0]).toBeCloseTo(0.45, 14)
  })
  it('convertValues reads no unit as a plain fraction: a stack’s absorptance 0.25 draws as 25 % and back, never as a length', () => {
    // 1 % = 0.01 by definition (SI Brochure, 9th ed., §5.4.7)
    expect(convertValues([0.25, 1], '', '%')).toEqual({ ok: true, value: [25, 100] })
    expect(convertValues([45], '%', undefined)).toEqual({ ok: true, value: [0.45] })
    const r = convertValues([1], '', 'nm')
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.message).toBe('cannot convert no unit (fraction) to "nm" (length)')
  })
  it('convertValues([1], "um", "cm^-1") gives exactly 10000', () => {
    const r = convertValues([1], 'um', 'cm^-1')
    expect(r.ok && r.value[0]).toBe(10000)
  })
  it('convertValues leaves a series in its own unit untouched, known or not', () => {
    const r = convertValues([1, 2], 'arb', 'arb')
    expect(r).toEqual({ ok: true, value: [1, 2] })
  })
  it('convertValues explains why a length cannot go on a percent axis', () => {
    const r = convertValues([1], 'nm', '%')
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.message).toBe('cannot convert "nm" (length) to "%" (fraction)')
  })
  it('convertValues names the unit it does not know', () => {
    const r = convertValues([1], 'counts', 'nm')
    expect(r.ok).toBe(false)
    if (!r.ok) expect(r.message).toContain('"counts" is not a unit')
    expect(canConvert('eV', 'nm')).toBe(true)
  })
})

describe('unitInfo and normalizeUnit', () => {
  it('normalizeUnit folds µ, μ, ⁻¹ and ² spellings', () => {
    expect(normalizeUnit('µm')).toBe('um')
    expect(normalizeUnit('μm')).toBe('um')
    expect(normalizeUnit('cm⁻¹')).toBe('cm^-1')
    expect(normalizeUnit('mA/cm²')).toBe('mA/cm^2')
    expect(unitInfo('mA / cm^2')?.factor).toBe(10)
  })
})

describe('prettyUnit', () => {
  it('prettyUnit typesets reciprocal units, micro and powers', () => {
    expect(prettyUnit('1/cm')).toBe('cm⁻¹')
    expect(prettyUnit('cm^-1')).toBe('cm⁻¹')
    expect(prettyUnit('um')).toBe('µm')
    expect(prettyUnit('mA/cm^2')).toBe('mA/cm²')
    expect(prettyUnit('W/m^2/nm')).toBe('W m⁻² nm⁻¹')
    expect(prettyUnit('eV')).toBe('eV')
    expect(prettyUnit(undefined)).toBe('')
  })
})

import { unitChoices } from '../../../shared/plot/units'

describe('unitChoices', () => {
  it('unitChoices offers every spectral unit on an energy or wavelength axis', () => {
    expect(unitChoices('eV')).toEqual(['eV', 'meV', 'nm', 'um', '1/cm', 'THz'])
    expect(unitChoices('nm')).toContain('eV')
  })
  it('unitChoices offers the same dimension elsewhere and nothing for unknown units', () => {
    expect([...unitChoices('%')].sort()).toEqual(['%', '1'])
    expect(unitChoices('mA/cm^2')).toEqual(['A/m^2', 'mA/cm^2', 'A/cm^2'])
    expect(unitChoices('1/cm')[0]).toBe('1/cm')
    expect(unitChoices('counts')).toEqual([])
  })
})
