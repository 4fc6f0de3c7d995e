import { describe, expect, it } from 'vitest'
import {
  alphaDirect, alphaEdge, alphaIndirect, alphaIndirectPhonon, alphaTauc, alphaUrbach, edgeJunctionOffset,
} from '../../../shared/optics/absorption'
import { kB } from '../../../shared/optics/constants'
import { arr, el, eV, expectRel } from './close'

const B5 = (4e9 * eV) / 1e-4 // 4e9 eV/cm² in J/m², the coefficient of the DESIGN §5 example sheet
const ROUNDING = 1e-12 // a handful of floating-point operations

describe('alphaTauc(E, Eg, B, r)', () => {
  it('alphaTauc satisfies its definition (αE)^(1/r) = B(E − Eg) for r = 1/2, 1, 3/2, 2 and 3 (Tauc et al. 1966)', () => {
    for (const r of [0.5, 1, 1.5, 2, 3]) {
      const B = r === 0.5 ? B5 : 1e3 // any positive coefficient
      const E = 1.7 * eV
      const a = alphaTauc(E, 1.5 * eV, B, r) as number
      expectRel(Math.pow(a * E, 1 / r), B * 0.2 * eV, ROUNDING)
    }
  })
  it('alphaTauc is 0 at and below the gap and positive just above it', () => {
    expect(alphaTauc(1.5 * eV, 1.5 * eV, B5, 0.5)).toBe(0)
    expect(alphaTauc(1.2 * eV, 1.5 * eV, B5, 0.5)).toBe(0)
    expect(alphaTauc(1.5 * eV * (1 + 1e-12), 1.5 * eV, B5, 0.5)).toBeGreaterThan(0)
  })
  it('alphaTauc over an array matches the scalar formula element by element (exact)', () => {
    const E = arr(1.2 * eV, 1.5 * eV, 1.6 * eV, 2.4 * eV)
    for (const r of [0.5, 2, 1.5]) {
      const out = alphaTauc(E, 1.5 * eV, B5, r)
      for (let i = 0; i < E.length; i++) expect(el(out, i)).toBe(alphaTauc(E[i], 1.5 * eV, B5, r))
    }
    const gaps = alphaTauc(1.6 * eV, arr(1.4 * eV, 1.5 * eV, 1.7 * eV), B5, 0.5)
    expect(el(gaps, 1)).toBe(alphaTauc(1.6 * eV, 1.5 * eV, B5, 0.5))
    expect(el(gaps, 2)).toBe(0)
  })
  it('alphaTauc refuses a non-positive exponent and a negative coefficient, naming the function', () => {
    expect(() => alphaTauc(1.6 * eV, 1.5 * eV, B5, 0)).toThrow(/alpha_tauc: the exponent r must be positive/)
    expect(() => alphaTauc(1.6 * eV, 1.5 * eV, -1, 0.5)).toThrow(/alpha_tauc: the coefficient B/)
    expect(() => alphaTauc(1.6 * eV, -1, B5, 0.5)).toThrow(/alpha_tauc: the gap Eg/)
    expect(() => alphaDirect(1.6 * eV, 1.5 * eV, -1)).toThrow(/alpha_direct: the coefficient B/)
  })
  it('alphaDirect and alphaIndirect are alphaTauc with r = 1/2 and r = 2 (exact)', () => {
    const E = arr(1.45 * eV, 1.55 * eV, 2 * eV)
    const d = alphaDirect(E, 1.5 * eV, B5)
    const i2 = alphaIndirect(E, 1.5 * eV, 1e3)
    for (let i = 0; i < E.length; i++) {
      expect(el(d, i)).toBe(el(alphaTauc(E, 1.5 * eV, B5, 0.5), i))
      expect(el(i2, i)).toBe(el(alphaTauc(E, 1.5 * eV, 1e3, 2), i))
    }
  })
  it('worked examples of the doc comments', () => {
    expectRel(alphaTauc(1.6 * eV, 1.5 * eV, B5, 0.5), 1.25e6, ROUNDING)
    expectRel(alphaDirect(1.6 * eV, 1.5 * eV, B5), 1.25e6, ROUNDING)
    expectRel(alphaIndirect(1.2 * eV, 1.1 * eV, 1e3 / Math.sqrt(eV * 1e-2)), 1e6 / 1.2, ROUNDING)
  })
})

describe('alphaIndirectPhonon(E, Eg, Ep, T, C)', () => {
  const Eg = 1.1 * eV
  const Ep = 0.05 * eV
  const C = (1e4 * 100) / (eV * eV) // 1e4 cm⁻¹/eV²
  it('alphaIndirectPhonon is 0 below Eg − Ep (no branch open)', () => {
    expect(alphaIndirectPhonon(1.04 * eV, Eg, Ep, 300, C)).toBe(0)
  })
  it('alphaIndirectPhonon has only the phonon-absorption branch C·N·(E − Eg + Ep)² between Eg − Ep and Eg + Ep', () => {
    const E = 1.12 * eV
    const N = 1 / Math.expm1(Ep / (kB * 300)) // Bose–Einstein occupation
    expectRel(alphaIndirectPhonon(E, Eg, Ep, 300, C), C * N * (E - Eg + Ep) ** 2, ROUNDING)
  })
  it('alphaIndirectPhonon adds the emission branch C·(N + 1)·(E − Eg − Ep)² above Eg + Ep (Macfarlane & Roberts 1955)', () => {
    const E = 1.2 * eV
    const N = 1 / Math.expm1(Ep / (kB * 300))
    expectRel(alphaIndirectPhonon(E, Eg, Ep, 300, C), C * (N * (E - Eg + Ep) ** 2 + (N + 1) * (E - Eg - Ep) ** 2), ROUNDING)
  })
  it('alphaIndirectPhonon at Ep = kT·ln 2 has N = 1 and N + 1 = 2 (Bose–Einstein closed form)', () => {
    const T = 300
    const ep = kB * T * Math.LN2
    const E = Eg + 3 * ep
    // absorption: C·1·(4ep)², emission: C·2·(2ep)²
    expectRel(alphaIndirectPhonon(E, Eg, ep, T, C), C * (16 * ep * ep + 8 * ep * ep), 1e-12)
  })
  it('alphaIndirectPhonon at T = 0 keeps only phonon emission, C·(E − Eg − Ep)²', () => {
    expect(alphaIndirectPhonon(1.12 * eV, Eg, Ep, 0, C)).toBe(0)
    expectRel(alphaIndirectPhonon(1.2 * eV, Eg, Ep, 0, C), C * (0.05 * eV) ** 2, ROUNDING)
  })
  it('alphaIndirectPhonon emission/absorption prefactor ratio is e^(Ep/kT) (detailed balance of phonons)', () => {
    const T = 250
    // two energies where only one branch has its base equal to 1e-2 eV
    const abs = alphaIndirectPhonon(Eg - Ep + 0.01 * eV, Eg, Ep, T, C) as number
    const both = alphaIndirectPhonon(Eg + Ep + 0.01 * eV, Eg, Ep, T, C) as number
    const absAtSecond = C * (1 / Math.expm1(Ep / (kB * T))) * (2 * Ep + 0.01 * eV) ** 2
    expectRel((both - absAtSecond) / abs, Math.exp(Ep / (kB * T)), 1e-9)
  })
  it('alphaIndirectPhonon refuses a non-positive phonon energy and a negative temperature', () => {
    expect(() => alphaIndirectPhonon(1.2 * eV, Eg, 0, 300, C)).toThrow(/alpha_indirect_phonon: the phonon energy/)
    expect(() => alphaIndirectPhonon(1.2 * eV, Eg, Ep, -1, C)).toThrow(/temperature/)
  })
  it('worked example of the doc comment: 6724.60 1/m at 1.2 eV, 300 K', () => {
    expectRel(alphaIndirectPhonon(1.2 * eV, Eg, Ep, 300, C), 6724.6, 1e-5)
  })
})

describe('alphaUrbach(E, alpha0, E0, Eu)', () => {
  it('alphaUrbach is alpha0 at E0 exactly and falls by e per Eu below it (Urbach 1953)', () => {
    expect(alphaUrbach(1.5 * eV, 1e6, 1.5 * eV, 0.025 * eV)).toBe(1e6)
    expectRel(alphaUrbach(1.475 * eV, 1e6, 1.5 * eV, 0.025 * eV), 1e6 / Math.E, ROUNDING)
  })
  it('alphaUrbach over an array equals the scalar formula (exact)', () => {
    const E = arr(1.3 * eV, 1.4 * eV, 1.6 * eV)
    const out = alphaUrbach(E, 1e6, 1.5 * eV, 0.025 * eV)
    for (let i = 0; i < E.length; i++) expectRel(el(out, i), 1e6 * Math.exp((E[i] - 1.5 * eV) / (0.025 * eV)), 1e-14)
  })
  it('alphaUrbach refuses a non-positive Urbach energy', () => {
    expect(() => alphaUrbach(1.4 * eV, 1e6, 1.5 * eV, 0)).toThrow(/alpha_urbach: the Urbach energy Eu must be positive/)
    expect(() => alphaUrbach(1.4 * eV, -1, 1.5 * eV, 0.02 * eV)).toThrow(/alpha_urbach: alpha0 must be zero or positive/)
  })
  it('worked example of the doc comment', () => {
    expectRel(alphaUrbach(1.45 * eV, 1e6, 1.5 * eV, 0.025 * eV), 1.3533528e5, 1e-7)
  })
})

describe('alphaEdge(E, Eg, B, r, Eu)', () => {
  const Eg = 1.48 * eV
  const Eu = 0.022 * eV
  it('edgeJunctionOffset solves r/δ − 1/(Eg + δ) = 1/Eu, where the Tauc log-slope meets the Urbach slope', () => {
    for (const r of [0.5, 1.5, 2, 3]) {
      for (const eu of [0.005 * eV, 0.022 * eV, 0.2 * eV]) {
        const d = edgeJunctionOffset(Eg, r, eu)
        expect(d).toBeGreaterThan(0)
        expectRel(r / d - 1 / (Eg + d), 1 / eu, 1e-12)
      }
    }
  })
  it('edgeJunctionOffset tends to r·Eu for Eu ≪ Eg', () => {
    expectRel(edgeJunctionOffset(Eg, 0.5, 1e-6 * eV), 0.5e-6 * eV, 1e-5)
    expectRel(edgeJunctionOffset(Eg, 2, 1e-6 * eV), 2e-6 * eV, 1e-5)
  })
  it('alphaEdge is continuous in value and in log-slope at the junction', () => {
    for (const r of [0.5, 2]) {
      const B = r === 0.5 ? B5 : 1e3
      const Ej = Eg + edgeJunctionOffset(Eg, r, Eu)
      const h = 1e-7 * eV
      const below = alphaEdge(Ej - h, Eg, B, r, Eu) as number
      const above = alphaEdge(Ej + h, Eg, B, r, Eu) as number
      const at = alphaEdge(Ej, Eg, B, r, Eu) as number
      expectRel(below, at, 1e-4)
      expectRel(above, at, 1e-4)
      // one-sided log-derivatives on each side agree with 1/Eu
      const slopeBelow = (Math.log(at) - Math.log(alphaEdge(Ej - 2 * h, Eg, B, r, Eu) as number)) / (2 * h)
      const slopeAbove = (Math.log(alphaEdge(Ej + 2 * h, Eg, B, r, Eu) as number) - Math.log(at)) / (2 * h)
      expectRel(slopeBelow, 1 / Eu, 1e-6)
      expectRel(slopeAbove, 1 / Eu, 1e-3)
    }
  })
  it('alphaEdge is the Tauc form above the junction and an exponential of width Eu below it', () => {
    const Ej = Eg + edgeJunctionOffset(Eg, 0.5, Eu)
    expect(alphaEdge(1.6 * eV, Eg, B5, 0.5, Eu)).toBe(alphaTauc(1.6 * eV, Eg, B5, 0.5))
    const a1 = alphaEdge(Ej - 0.1 * eV, Eg, B5, 0.5, Eu) as number
    const a2 = alphaEdge(Ej - 0.1 * eV - Eu, Eg, B5, 0.5, Eu) as number
    expectRel(a1 / a2, Math.E, 1e-12)
    // the tail is non-zero below the gap, where the bare Tauc form is 0
    expect(alphaTauc(1.45 * eV, Eg, B5, 0.5)).toBe(0)
    expect(alphaEdge(1.45 * eV, Eg, B5, 0.5, Eu)).toBeGreaterThan(0)
  })
  it('alphaEdge with Eu = 0 is the bare Tauc edge (exact)', () => {
    const E = arr(1.4 * eV, 1.48 * eV, 1.5 * eV, 2 * eV)
    const out = alphaEdge(E, Eg, B5, 0.5, 0)
    for (let i = 0; i < E.length; i++) expect(el(out, i)).toBe(alphaTauc(E[i], Eg, B5, 0.5))
  })
  it('alphaEdge over an array (the fast loops) equals the scalar path for r = 1/2, 2 and 3/2 (exact)', () => {
    const E = Float64Array.from({ length: 41 }, (_, i) => (1.3 + i * 0.01) * eV)
    for (const r of [0.5, 2, 1.5]) {
      const out = alphaEdge(E, Eg, B5, r, Eu)
      for (let i = 0; i < E.length; i++) expect(el(out, i)).toBe(alphaEdge(E[i], Eg, B5, r, Eu))
    }
  })
  it('alphaEdge broadcasts array parameters (a sweep over Eu)', () => {
    const eus = arr(0.01 * eV, 0.02 * eV, 0.04 * eV)
    const out = alphaEdge(1.45 * eV, Eg, B5, 0.5, eus)
    for (let i = 0; i < 3; i++) expect(el(out, i)).toBe(alphaEdge(1.45 * eV, Eg, B5, 0.5, eus[i]))
    expect(el(out, 0)).toBeLessThan(el(out, 2))
  })
  it('alphaEdge stays finite and positive far into the tail and far above the gap', () => {
    const out = alphaEdge(arr(0.1 * eV, 10 * eV), Eg, B5, 0.5, Eu)
    expect(el(out, 0)).toBeGreaterThanOrEqual(0)
    expect(Number.isFinite(el(out, 0))).toBe(true)
    expect(Number.isFinite(el(out, 1))).toBe(true)
  })
  it('alphaEdge refuses a non-positive gap, a non-positive r and a negative Eu', () => {
    expect(() => alphaEdge(1.5 * eV, 0, B5, 0.5, Eu)).toThrow(/alpha_edge: the gap Eg must be positive/)
    expect(() => alphaEdge(1.5 * eV, Eg, B5, -1, Eu)).toThrow(/alpha_edge: the exponent r/)
    expect(() => alphaEdge(1.5 * eV, Eg, B5, 0.5, -Eu)).toThrow(/alpha_edge: the Urbach energy Eu/)
  })
  it('worked examples of the doc comments', () => {
    expectRel(edgeJunctionOffset(Eg, 0.5, Eu) / eV, 0.01084, 1e-4)
    expectRel(alphaEdge(1.5 * eV, Eg, B5, 0.5, Eu), 5.96285e5, 1e-5)
  })
})
