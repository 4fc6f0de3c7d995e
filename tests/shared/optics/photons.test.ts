import { describe, expect, it } from 'vitest'
import { kT, photonEnergy, photonFrequency, photonWavelength, wavenumber } from '../../../shared/optics/photons'
import { c0, h, kB } from '../../../shared/optics/constants'
import { arr, el, eV, expectRel } from './close'

describe('photon conversions', () => {
  it('photonEnergy(λ) = hc/λ exactly, scalar and array alike', () => {
    expect(photonEnergy(1e-6)).toBe((h * c0) / 1e-6)
    const out = photonEnergy(arr(400e-9, 800e-9))
    expect(out).toBeInstanceOf(Float64Array)
    expect(el(out, 0)).toBe((h * c0) / 400e-9)
    expect(el(out, 1)).toBe((h * c0) / 800e-9)
  })
  it('photonEnergy(1 µm) is 1.239842 eV (hc/e = 1239.84198 eV·nm, CODATA 2018)', () => {
    expectRel((photonEnergy(1e-6) as number) / eV, 1.239841984, 1e-9)
  })
  it('photonWavelength(photonEnergy(λ)) returns λ (round trip, rounding only)', () => {
    const lam = arr(250e-9, 550e-9, 1107e-9, 4e-6)
    const back = photonWavelength(photonEnergy(lam))
    for (let i = 0; i < lam.length; i++) expectRel(el(back, i), lam[i], 4e-16)
  })
  it('wavenumber(500 nm) is 20000 cm⁻¹ (definition 1/λ)', () => {
    expect(wavenumber(500e-9)).toBe(1 / 500e-9)
    expectRel((wavenumber(500e-9) as number) / 100, 20000, 1e-15)
  })
  it('photonFrequency(1 µm) is c/λ = 2.99792458e14 Hz (c exact)', () => {
    expect(photonFrequency(1e-6)).toBe(c0 / 1e-6)
    expectRel(photonFrequency(1e-6), 2.99792458e14, 1e-15)
  })
  it('kT(300 K) is 25.852 meV (kB exact, CODATA 2018)', () => {
    expect(kT(300)).toBe(kB * 300)
    expectRel((kT(300) as number) / eV, 0.025851999786, 1e-10)
    expect(kT(0)).toBe(0)
  })
  it('worked examples of the doc comments', () => {
    expectRel(photonEnergy(1e-6), 1.98644586e-19, 1e-8)
    expectRel(photonWavelength(1.602176634e-19), 1.23984198e-6, 1e-8)
    expectRel(wavenumber(500e-9), 2e6, 1e-15)
    expectRel(photonFrequency(1e-6), 2.99792458e14, 1e-15)
    expectRel(kT(300), 4.141947e-21, 1e-15)
  })
})
