import { describe, expect, it } from 'vitest'
import {
  boseIntegral2, detailedBalance, detailedBalanceFf, detailedBalanceJsc, detailedBalanceVoc, photocurrent, photonFlux, planckPhotonRadiance, shockleyQueisserPoint,
} from '../../../shared/optics/spectra'
import { c0, h, kB, q, sigmaSB } from '../../../shared/optics/constants'
import { astmSI, loadAstmG173 } from '../../utils/referenceData'
import { arr, el, eV, expectRel } from './close'

const HC = h * c0
const ROUND = 1e-12 // a few floating-point operations

/** Log-spaced grid from a to b. */
const logGrid = (a: number, b: number, n: number): Float64Array =>
  Float64Array.from({ length: n }, (_, i) => a * Math.pow(b / a, i / (n - 1)))

/** Trapezoid ∫ y dx. */
function trapz(x: Float64Array, y: Float64Array): number {
  let s = 0
  for (let i = 1; i < x.length; i++) s += 0.5 * (x[i] - x[i - 1]) * (y[i] + y[i - 1])
  return s
}

describe('planckPhotonRadiance(lambda, T)', () => {
  it('planckPhotonRadiance integrates to the Stefan–Boltzmann law σT⁴ over a hemisphere (CODATA 2018 σ)', () => {
    const T = 5800
    const lam = logGrid(50e-9, 1e-3, 20001)
    const L = planckPhotonRadiance(lam, T) as Float64Array
    const power = Math.PI * trapz(lam, L.map((v, i) => (v * HC) / lam[i]))
    expectRel(power, sigmaSB * T ** 4, 1e-6)
  })
  it('planckPhotonRadiance peaks at λ·T = 3669.7 µm·K, the photon-count Wien constant (x = 4(1 − e^(−x)), x = 3.9207)', () => {
    const T = 3000
    let lo = 0.2e-6
    let hi = 5e-6
    const f = (l: number): number => planckPhotonRadiance(l, T) as number
    for (let i = 0; i < 200; i++) {
      const a = lo + (hi - lo) / 3
      const b = hi - (hi - lo) / 3
      if (f(a) < f(b)) lo = a
      else hi = b
    }
    expectRel(((lo + hi) / 2) * T * 1e6, HC / (3.920690395 * kB) * 1e6, 1e-6)
    expectRel(HC / (3.920690395 * kB) * 1e6, 3669.7, 1e-4) // from memory
  })
  it('planckPhotonRadiance is 0 at 0 K and refuses a negative temperature', () => {
    expect(planckPhotonRadiance(1e-6, 0)).toBe(0)
    expect(() => planckPhotonRadiance(1e-6, -5)).toThrow(/planck_photon_radiance: the temperature/)
  })
  it('worked example of the doc comment', () => {
    expectRel(planckPhotonRadiance(1e-6, 5800), 5.47615e31, 1e-5)
  })
})

describe('photonFlux / photocurrent', () => {
  it('photonFlux(λ, I) is I·λ/(hc): 1 W m⁻² nm⁻¹ at 1 µm carries 5.034e18 photons m⁻² s⁻¹ nm⁻¹', () => {
    expect(photonFlux(1e-6, 1e9)).toBe((1e9 * 1e-6) / HC)
    expectRel((photonFlux(1e-6, 1e9) as number) * 1e-9, 5.0341165e18, 1e-7)
  })
  it('photocurrent of a flat flux over 100 nm is q·Φ·Δλ, and the grid may run either way', () => {
    expectRel(photocurrent(arr(400e-9, 450e-9, 500e-9), 1, 1e27), q * 1e27 * 1e-7, ROUND)
    expectRel(photocurrent(arr(500e-9, 450e-9, 400e-9), 1, 1e27), q * 1e27 * 1e-7, ROUND)
    expectRel(photocurrent(arr(400e-9, 500e-9), arr(0.5, 0.5), arr(1e27, 1e27)), 0.5 * q * 1e27 * 1e-7, ROUND)
  })
  it('photocurrent refuses a single wavelength and arrays of different lengths', () => {
    expect(() => photocurrent(500e-9, 1, 1e27)).toThrow(/photocurrent: needs a wavelength grid/)
    expect(() => photocurrent(arr(400e-9, 500e-9), arr(1, 1, 1), 1e27)).toThrow(/different lengths/)
  })
  it('worked examples of the doc comments', () => {
    expectRel(photonFlux(1e-6, 1e9), 5.0341165e27, 1e-7)
    expectRel(photocurrent(arr(400e-9, 500e-9), 1, 1e27), 16.02176634, ROUND)
  })
})

describe('detailed balance of a step absorber', () => {
  it('boseIntegral2 is 2ζ(3) at 0 and continuous where its two methods meet (x = 2)', () => {
    expectRel(boseIntegral2(0), 2 * 1.2020569031595942, 1e-14)
    expectRel(boseIntegral2(2 - 1e-12), boseIntegral2(2), 1e-11)
    // ∫_x^∞ t²/(eᵗ − 1) dt ≈ e^(−x)(x² + 2x + 2) for large x (first term of the series)
    expectRel(boseIntegral2(40), Math.exp(-40) * (1600 + 80 + 2), 1e-15)
  })
  it('the ultimate efficiency xg·∫_xg^∞ x²/(eˣ − 1)dx / (π⁴/15) peaks at 44 % near xg = 2.2 (Shockley & Queisser, J. Appl. Phys. 32, 510 (1961))', () => {
    let best = 0
    let bestX = 0
    for (let x = 1; x <= 4; x += 0.001) {
      const u = (x * boseIntegral2(x)) / (Math.PI ** 4 / 15)
      if (u > best) {
        best = u
        bestX = x
      }
    }
    expect(best).toBeCloseTo(0.44, 2)
    expect(Math.abs(bestX - 2.17)).toBeLessThan(0.03)
  })
  it('the radiative dark current J0 equals q·π·∫ planckPhotonRadiance dλ up to hc/Eg (two independent routes)', () => {
    const Eg = 1.34 * eV
    const lam = logGrid(100e-9, HC / Eg, 200001)
    const J0num = q * Math.PI * trapz(lam, planckPhotonRadiance(lam, 300) as Float64Array)
    // a flat dummy spectrum only to run the calculation; J0 does not depend on it
    const r = shockleyQueisserPoint(Eg, 300, arr(300e-9, 2000e-9), arr(1e27, 1e27))
    expectRel(r.J0, J0num, 1e-6)
  })
  it('detailedBalance is 0 when no incident photon is above the gap, and refuses bad spectra', () => {
    const lam = arr(1000e-9, 1100e-9, 1200e-9)
    const phi = arr(1e27, 1e27, 1e27)
    expect(detailedBalance(2 * eV, 300, lam, phi)).toBe(0)
    expect(() => detailedBalance(1 * eV, 300, 500e-9, 1e27)).toThrow(/detailed_balance: needs a wavelength grid/)
    expect(() => detailedBalance(1 * eV, 300, arr(1e-6, 0.9e-6, 1.1e-6), phi)).toThrow(/strictly increasing or strictly decreasing/)
    expect(() => detailedBalance(1 * eV, 300, lam, arr(1e27, -1, 1e27))).toThrow(/photon flux must be finite and not negative/)
    expect(() => detailedBalance(0, 300, lam, phi)).toThrow(/the gap Eg must be positive/)
    expect(() => detailedBalance(1 * eV, 0, lam, phi)).toThrow(/the cell temperature/)
  })
  it('the companions are 0 with no photon above the gap and refuse bad input in their own names', () => {
    const lam = arr(1000e-9, 1100e-9, 1200e-9)
    const phi = arr(1e27, 1e27, 1e27)
    expect([detailedBalanceJsc(2 * eV, 300, lam, phi), detailedBalanceVoc(2 * eV, 300, lam, phi), detailedBalanceFf(2 * eV, 300, lam, phi)]).toEqual([0, 0, 0])
    expect(() => detailedBalanceJsc(0, 300, lam, phi)).toThrow(/detailed_balance_jsc: .*the gap Eg/)
    expect(() => detailedBalanceVoc(1 * eV, -1, lam, phi)).toThrow(/detailed_balance_voc: .*cell temperature/)
    expect(() => detailedBalanceFf(1 * eV, 300, 500e-9, 1e27)).toThrow(/detailed_balance_ff: needs a wavelength grid/)
  })
})

const astm = loadAstmG173()
if (!astm.ok) console.warn(`skipping the ASTM G173-03 checks: ${astm.reason}`)
const describeAstm = astm.ok ? describe : describe.skip

describeAstm('ASTM G173-03 reference spectrum (../shared/data/astm-g173-03.csv)', () => {
  const data = astm.ok ? astm.data : null
  const si = data ? astmSI(data, 'global') : { lambda: new Float64Array(0), irradiance: new Float64Array(0) }
  const flux = data ? (photonFlux(si.lambda, si.irradiance) as Float64Array) : new Float64Array(0)

  it('the global-tilt spectrum integrates to 1000.4 W/m² and the direct one to 900.1 W/m² (ASTM G173-03)', () => {
    expect(Math.abs(trapz(si.lambda, si.irradiance) - 1000.4)).toBeLessThan(0.05)
    const direct = astmSI(data!, 'direct')
    expect(Math.abs(trapz(direct.lambda, direct.irradiance) - 900.1)).toBeLessThan(0.05)
  })
  it('detailed balance takes the incident power ∫Φ·hc/λ dλ of the spectrum it is given (1000.4 W/m²)', () => {
    const r = shockleyQueisserPoint(1.34 * eV, 300, si.lambda, flux)
    expectRel(r.Pin, trapz(si.lambda, si.irradiance), 1e-12)
  })
  it('photocurrent of a step absorber at 1.12 eV is the 43.8 mA/cm² Jsc limit (Rühle, Solar Energy 130, 139 (2016); from memory)', () => {
    const Eg = 1.12 * eV
    const A = si.lambda.map((l) => (HC / l >= Eg ? 1 : 0))
    const J = photocurrent(si.lambda, A, flux) / 10 // mA/cm²
    expectRel(J, 43.8, 0.01)
    // the detailed-balance Jsc cuts the edge interval exactly; the grid step is 1 nm here, so they agree closely
    expectRel(shockleyQueisserPoint(Eg, 300, si.lambda, flux).Jsc / 10, J, 2e-3)
  })
  it('detailed balance at 1.34 eV gives Jsc ≈ 35 mA/cm², Voc ≈ 1.07 V and 33.7 % (Rühle 2016, Table 1; from memory)', () => {
    const r = shockleyQueisserPoint(1.34 * eV, 300, si.lambda, flux)
    expectRel(r.Jsc / 10, 35.0, 0.02)
    expectRel(r.Voc, 1.07, 0.02)
    expect(r.efficiency).toBeCloseTo(0.337, 3)
    expect(r.FF).toBeGreaterThan(0.88)
    expect(r.FF).toBeLessThan(0.9)
    expect(r.Vmp).toBeLessThan(r.Voc)
    expectRel(r.Vmp * r.Jmp, r.efficiency * r.Pin, 1e-12)
  })
  it('detailedBalance over gaps from 0.9 to 1.8 eV peaks at 33.7 % near 1.34 eV (Rühle 2016)', () => {
    const Egs = Float64Array.from({ length: 181 }, (_, i) => (0.9 + i * 0.005) * eV)
    const eff = detailedBalance(Egs, 300, si.lambda, flux) as Float64Array
    let best = 0
    for (let i = 1; i < eff.length; i++) if (eff[i] > eff[best]) best = i
    expect(eff[best]).toBeCloseTo(0.337, 3)
    expect(Math.abs(Egs[best] / eV - 1.34)).toBeLessThan(0.01)
    // silicon's gap sits near the second maximum, 33.4 % (Rühle 2016, from memory)
    expect(el(detailedBalance(arr(1.12 * eV), 300, si.lambda, flux), 0)).toBeCloseTo(0.334, 3)
  })
  it('detailedBalanceJsc, Voc and FF are the fields of the same calculation, and η = Jsc·Voc·FF/Pin', () => {
    const Egs = arr(1.12 * eV, 1.34 * eV, 1.6 * eV)
    const J = detailedBalanceJsc(Egs, 300, si.lambda, flux) as Float64Array
    const V = detailedBalanceVoc(Egs, 300, si.lambda, flux) as Float64Array
    const F = detailedBalanceFf(Egs, 300, si.lambda, flux) as Float64Array
    const eta = detailedBalance(Egs, 300, si.lambda, flux) as Float64Array
    for (let i = 0; i < 3; i++) {
      const r = shockleyQueisserPoint(Egs[i], 300, si.lambda, flux)
      expect([J[i], V[i], F[i]]).toEqual([r.Jsc, r.Voc, r.FF])
      expectRel((J[i] * V[i] * F[i]) / r.Pin, eta[i], 1e-12)
    }
    // a wider gap: less current, more voltage (Rühle 2016, Fig. 2 trends; common practice)
    expect(J[0]).toBeGreaterThan(J[1])
    expect(J[1]).toBeGreaterThan(J[2])
    expect(V[0]).toBeLessThan(V[1])
    expect(V[1]).toBeLessThan(V[2])
  })
  it('detailed balance at 1.34 eV, 300 K: Jsc ≈ 34.5 mA/cm², Voc ≈ 1.07 V, FF ≈ 0.89 (Rühle, Solar Energy 130, 139 (2016); from memory)', () => {
    expectRel((detailedBalanceJsc(1.34 * eV, 300, si.lambda, flux) as number) / 10, 34.5, 0.02)
    expectRel(detailedBalanceVoc(1.34 * eV, 300, si.lambda, flux) as number, 1.07, 0.02)
    expect(Math.abs((detailedBalanceFf(1.34 * eV, 300, si.lambda, flux) as number) - 0.89)).toBeLessThan(0.005)
  })
  it('the worked examples of the companions’ doc comments (350.3 A/m², 1.082 V, 0.889)', () => {
    expect((detailedBalanceJsc(1.34 * eV, 300, si.lambda, flux) as number).toFixed(1)).toBe('350.3')
    expect((detailedBalanceVoc(1.34 * eV, 300, si.lambda, flux) as number).toFixed(3)).toBe('1.082')
    expect((detailedBalanceFf(1.34 * eV, 300, si.lambda, flux) as number).toFixed(3)).toBe('0.889')
  })
  it('detailedBalance does not depend on the direction of the wavelength grid', () => {
    const rev = si.lambda.slice().reverse()
    const revFlux = flux.slice().reverse()
    expectRel(detailedBalance(1.34 * eV, 300, rev, revFlux), detailedBalance(1.34 * eV, 300, si.lambda, flux) as number, 1e-12)
  })
  it('a hotter cell loses efficiency (J0 grows with T): 1.34 eV at 350 K is below 300 K', () => {
    const eff = detailedBalance(1.34 * eV, arr(300, 350), si.lambda, flux)
    expect(el(eff, 1)).toBeLessThan(el(eff, 0))
  })
})
