/**
 * Photons: conversions between vacuum wavelength, photon energy, wavenumber and frequency, and the thermal energy kT.
 * All SI. Source for the relations: E = hν = hc/λ (Planck–Einstein); constants CODATA 2018 (./constants).
 */
import type { Num } from './num'
import { c0, h, kB } from './constants'

const HC = h * c0

/**
 * Photon energy of light of the given vacuum wavelength, E = hc/λ.
 *
 * - `lambda`: vacuum wavelength, m (> 0)
 * - result: photon energy, J
 *
 * Source: Planck–Einstein relation; h and c exact in the 2019 SI (CODATA 2018).
 *
 * @example photonEnergy(1e-6) → 1.98644586e-19 J (1.239842 eV)
 */
export function photonEnergy(lambda: Num): Num {
  if (typeof lambda === 'number') return HC / lambda
  const out = new Float64Array(lambda.length)
  for (let i = 0; i < out.length; i++) out[i] = HC / lambda[i]
  return out
}

/**
 * Vacuum wavelength of a photon of the given energy, λ = hc/E (the inverse of photonEnergy).
 *
 * - `E`: photon energy, J (> 0)
 * - result: vacuum wavelength, m
 *
 * Source: Planck–Einstein relation (CODATA 2018 h, c).
 *
 * @example photonWavelength(1.602176634e-19) (1 eV) → 1.23984198e-6 m (1239.84198 nm)
 */
export function photonWavelength(E: Num): Num {
  return photonEnergy(E)
}

/**
 * Spectroscopic wavenumber ν̃ = 1/λ (not the angular wavenumber 2π/λ).
 *
 * - `lambda`: vacuum wavelength, m (> 0)
 * - result: wavenumber, 1/m (shown as cm⁻¹ by convention: divide by 100)
 *
 * Source: definition (IUPAC Green Book, quantities of spectroscopy).
 *
 * @example wavenumber(500e-9) → 2e6 1/m (20000 cm⁻¹)
 */
export function wavenumber(lambda: Num): Num {
  if (typeof lambda === 'number') return 1 / lambda
  const out = new Float64Array(lambda.length)
  for (let i = 0; i < out.length; i++) out[i] = 1 / lambda[i]
  return out
}

/**
 * Frequency of light of the given vacuum wavelength, ν = c/λ.
 *
 * - `lambda`: vacuum wavelength, m (> 0)
 * - result: frequency, Hz
 *
 * Source: definition; c exact (CODATA 2018).
 *
 * @example photonFrequency(1e-6) → 2.99792458e14 Hz
 */
export function photonFrequency(lambda: Num): Num {
  if (typeof lambda === 'number') return c0 / lambda
  const out = new Float64Array(lambda.length)
  for (let i = 0; i < out.length; i++) out[i] = c0 / lambda[i]
  return out
}

/**
 * Thermal energy kB·T.
 *
 * - `T`: absolute temperature, K (≥ 0)
 * - result: energy, J
 *
 * Source: kB exact in the 2019 SI (CODATA 2018).
 *
 * @example kT(300) → 4.141947e-21 J (25.852 meV)
 */
export function kT(T: Num): Num {
  if (typeof T === 'number') return kB * T
  const out = new Float64Array(T.length)
  for (let i = 0; i < out.length; i++) out[i] = kB * T[i]
  return out
}
