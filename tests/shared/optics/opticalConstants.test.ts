import { describe, expect, it } from 'vitest'
import {
  alphaFromK, cauchyN, drudeEps1, drudeEps2, kFromAlpha, kFromEps, nFromEps, sellmeierN, taucLorentzEps1,
  taucLorentzEps2,
} from '../../../shared/optics/opticalConstants'
import { eps0, hbar, me, q } from '../../../shared/optics/constants'
import { arr, el, eV, expectRel } from './close'

const ROUNDING = 1e-12

// Silicon at 300 K: M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), Table 1. n and k as transcribed in the
// refractiveindex.info database (main/Si/Green-2008, CC0); the α column recalled from memory (3 significant digits).
const GREEN_SI = [
  { nm: 500, n: 4.294, k: 4.4165e-2, alphaPerCm: 1.11e4 },
  { nm: 800, n: 3.675, k: 5.4113e-3, alphaPerCm: 8.5e2 },
  { nm: 1000, n: 3.572, k: 5.093e-4, alphaPerCm: 6.4e1 },
  { nm: 1100, n: 3.542, k: 3.0637e-5, alphaPerCm: 3.5 },
]
const TABLE_ROUNDING = 5e-3 // the α column's three significant digits

describe('alphaFromK / kFromAlpha', () => {
  it('alphaFromK(k, λ) reproduces the α column of Green 2008 for silicon at 300 K', () => {
    for (const row of GREEN_SI) {
      expectRel((alphaFromK(row.k, row.nm * 1e-9) as number) / 100, row.alphaPerCm, TABLE_ROUNDING)
    }
  })
  it('alphaFromK over Green 2008 wavelengths as arrays gives the same numbers', () => {
    const out = alphaFromK(Float64Array.from(GREEN_SI, (r) => r.k), Float64Array.from(GREEN_SI, (r) => r.nm * 1e-9))
    expect(el(out, 0)).toBe(alphaFromK(GREEN_SI[0].k, 500 * 1e-9))
    expect(el(alphaFromK(arr(0.1, 0.2), 500e-9), 1)).toBe(alphaFromK(0.2, 500e-9))
  })
  it('kFromAlpha inverts alphaFromK (round trip)', () => {
    for (const row of GREEN_SI) expectRel(kFromAlpha(alphaFromK(row.k, row.nm * 1e-9), row.nm * 1e-9), row.k, 1e-15)
    const out = kFromAlpha(arr(1e6, 1e2), arr(500e-9, 1e-6))
    expectRel(el(out, 0), (1e6 * 500e-9) / (4 * Math.PI), 1e-15)
  })
  it('worked examples of the doc comments', () => {
    expectRel(alphaFromK(0.0198, 600e-9), 4.1469e5, 1e-5)
    expectRel(kFromAlpha(1e6, 500e-9), 0.0397887, 1e-6)
  })
})

describe('nFromEps / kFromEps', () => {
  it('nFromEps and kFromEps invert ε = (n + ik)² for dielectrics, semiconductors and metals', () => {
    for (const [n, k] of [[1.5, 0], [3.94, 0.02], [0.2, 3.5], [0.05, 8], [2, 2]]) {
      const e1 = n * n - k * k
      const e2 = 2 * n * k
      expectRel(nFromEps(e1, e2), n, 1e-14)
      if (k > 0) expectRel(kFromEps(e1, e2), k, 1e-14)
      else expect(kFromEps(e1, e2)).toBe(0)
    }
  })
  it('nFromEps keeps its digits for a good metal (ε1 = −1e4, ε2 = 1e-6), where √((|ε| + ε1)/2) cancels', () => {
    const n = nFromEps(-1e4, 1e-6) as number
    const k = kFromEps(-1e4, 1e-6) as number
    expectRel(2 * n * k, 1e-6, 1e-12)
    expectRel(k, 100, 1e-12)
  })
  it('worked examples of the doc comments', () => {
    expectRel(nFromEps(12, 1), 3.467102, 1e-6)
    expectRel(kFromEps(12, 1), 0.1442127, 1e-6)
    expectRel(kFromEps(-20, 1), 4.473532, 1e-6)
    expectRel(nFromEps(-20, 1), 0.1117685, 1e-6)
  })
})

describe('cauchyN / sellmeierN', () => {
  it('cauchyN is A + B/λ² + C/λ⁴ with SI coefficients', () => {
    expectRel(cauchyN(500e-9, 1.5, 4e-15, 0), 1.516, ROUNDING)
    expectRel(cauchyN(500e-9, 1.5, 4e-15, 1e-28), 1.516 + 1e-28 / 625e-28, ROUNDING)
  })
  it('sellmeierN with Malitson 1965 coefficients gives fused silica n_d = 1.4585 at 587.6 nm (J. Opt. Soc. Am. 55, 1205)', () => {
    // coefficients as published (µm², here ×1e-12 for m²); n_d = 1.45846 from memory of Malitson's table
    const n = sellmeierN(587.56e-9, 0.6961663, 0.0684043 ** 2 * 1e-12, 0.4079426, 0.1162414 ** 2 * 1e-12, 0.8974794, 9.896161 ** 2 * 1e-12)
    expectRel(n, 1.45846, 2e-5)
  })
  it('sellmeierN with the Schott N-BK7 coefficients gives n_d = 1.5168 (Schott data sheet, from memory)', () => {
    const n = sellmeierN(587.56e-9, 1.03961212, 6.00069867e-3 * 1e-12, 0.231792344, 2.00179144e-2 * 1e-12, 1.01046945, 103.560653 * 1e-12)
    expectRel(n, 1.5168, 2e-5)
  })
  it('sellmeierN is NaN inside a pole region where n² < 0, and broadcasts over wavelengths', () => {
    expect(sellmeierN(50e-9, 5, 0.01e-12, 0, 0, 0, 0)).toBeNaN() // λ² < C1: n² = 1 − 5/3 < 0
    const out = sellmeierN(arr(400e-9, 800e-9), 1, 0.01e-12, 0, 0, 0, 0)
    expect(el(out, 0)).toBeGreaterThan(el(out, 1)) // normal dispersion
  })
  it('worked example of the doc comment', () => {
    expectRel(
      sellmeierN(587.6e-9, 0.6961663, 0.0684043 ** 2 * 1e-12, 0.4079426, 0.1162414 ** 2 * 1e-12, 0.8974794, 9.896161 ** 2 * 1e-12),
      1.458462, 1e-6,
    )
  })
})

describe('drudeEps1 / drudeEps2', () => {
  it('drudeEps1 crosses zero at the screened plasma energy √(Ep²/ε∞ − γ²) (closed form)', () => {
    const Ep = 2 * eV
    const g = 0.1 * eV
    const E = Math.sqrt((Ep * Ep) / 4 - g * g)
    expect(Math.abs(drudeEps1(E, Ep, g, 4) as number)).toBeLessThan(1e-13)
  })
  it('aluminium (free-electron density 18.06e28 m⁻³) turns transparent at ħωp = 15.8 eV (Ashcroft & Mermin Table 1.1 density, from memory)', () => {
    const Ep = hbar * Math.sqrt((18.06e28 * q * q) / (eps0 * me))
    expectRel(Ep / eV, 15.8, 3e-3)
    expect(drudeEps1(15 * eV, Ep, 0, 1)).toBeLessThan(0) // metallic below
    expect(drudeEps1(16.5 * eV, Ep, 0, 1)).toBeGreaterThan(0) // transparent above
  })
  it('drudeEps2 is Ep²γ/(E(E² + γ²)), 0 without damping, and drudeEps1 tends to ε∞ far above Ep', () => {
    expectRel(drudeEps2(1 * eV, 2 * eV, 0.1 * eV, 4), 0.4 / 1.01, ROUNDING)
    expect(drudeEps2(1 * eV, 2 * eV, 0, 4)).toBe(0)
    expectRel(drudeEps1(1e4 * eV, 2 * eV, 0.1 * eV, 4), 4, 1e-7)
  })
  it('drudeEps1 and drudeEps2 refuse a negative damping', () => {
    expect(() => drudeEps1(eV, eV, -1, 1)).toThrow(/drude_eps1: the damping gamma/)
    expect(() => drudeEps2(eV, eV, -1, 1)).toThrow(/drude_eps2: the damping gamma/)
  })
  it('worked examples of the doc comments', () => {
    expectRel(drudeEps1(1 * eV, 2 * eV, 0.1 * eV, 4), 0.039604, 1e-5)
    expectRel(drudeEps2(1 * eV, 2 * eV, 0.1 * eV, 4), 0.39604, 1e-5)
  })
})

describe('taucLorentzEps2 / taucLorentzEps1 (Jellison & Modine, Appl. Phys. Lett. 69, 371 (1996))', () => {
  // a parameter set of the size J&M fit to amorphous silicon (A ≈ 122 eV, E0 ≈ 3.45 eV, C ≈ 2.54 eV, Eg ≈ 1.2 eV;
  // from memory) and a second, narrow oscillator
  const SETS = [
    { A: 122 * eV, E0: 3.45 * eV, C: 2.54 * eV, Eg: 1.2 * eV },
    { A: 60 * eV, E0: 4.2 * eV, C: 0.6 * eV, Eg: 3.1 * eV },
  ]

  /** ε1 − ε∞ = (2/π)·P∫_Eg^∞ ξ·ε2(ξ)/(ξ² − E²) dξ, by composite Gauss–Legendre with the pole subtracted. */
  function kramersKronig(E: number, s: (typeof SETS)[number]): number {
    const x = [-0.9061798459386640, -0.5384693101056831, 0, 0.5384693101056831, 0.9061798459386640]
    const w = [0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665, 0.2369268850561891]
    const e2 = (xi: number): number => taucLorentzEps2(xi, s.A, s.E0, s.C, s.Eg) as number
    const integrate = (a: number, b: number, panels: number, f: (t: number) => number): number => {
      let sum = 0
      for (let i = 0; i < panels; i++) {
        // geometric panels, dense near a, where the integrand changes fastest
        const lo = a + (b - a) * ((Math.pow(1e4, i / panels) - 1) / (1e4 - 1))
        const hi = a + (b - a) * ((Math.pow(1e4, (i + 1) / panels) - 1) / (1e4 - 1))
        const m = (lo + hi) / 2
        const h = (hi - lo) / 2
        for (let j = 0; j < 5; j++) sum += w[j] * h * f(m + h * x[j])
      }
      return sum
    }
    const top = 400 * s.E0
    let I: number
    if (E < s.Eg) {
      I = integrate(s.Eg, top, 4000, (xi) => (xi * e2(xi)) / (xi * xi - E * E))
    } else {
      // ξε2/((ξ − E)(ξ + E)) = g(ξ)/(ξ − E): subtract g(E) and add g(E)·ln((top − E)/(E − Eg))
      const g = (xi: number): number => (xi * e2(xi)) / (xi + E)
      const gE = g(E)
      const f = (xi: number): number => (g(xi) - gE) / (xi - E)
      I = integrate(s.Eg, E, 2000, f) + integrate(E, top, 4000, f) + gE * Math.log((top - E) / (E - s.Eg))
    }
    // tail beyond 400·E0, where ε2 ≈ A·E0·C/ξ³: ∫ ξ·(A·E0·C/ξ³)/ξ² dξ = A·E0·C/(3·top³)
    I += (s.A * s.E0 * s.C) / (3 * top ** 3)
    return (2 / Math.PI) * I
  }

  it('taucLorentzEps2 is 0 at and below Eg and matches its closed form above', () => {
    const s = SETS[0]
    expect(taucLorentzEps2(1.2 * eV, s.A, s.E0, s.C, s.Eg)).toBe(0)
    expect(taucLorentzEps2(0.5 * eV, s.A, s.E0, s.C, s.Eg)).toBe(0)
    const E = 3 * eV
    const ref = (s.A * s.E0 * s.C * (E - s.Eg) ** 2) / (((E * E - s.E0 * s.E0) ** 2 + s.C * s.C * E * E) * E)
    expectRel(taucLorentzEps2(E, s.A, s.E0, s.C, s.Eg), ref, ROUNDING)
  })
  it('taucLorentzEps1 equals ε∞ plus the numerical Kramers–Kronig integral of ε2, below, at and above the gap', () => {
    for (const s of SETS) {
      for (const f of [0.1, 0.5, 0.999, 1.0001, 1.3, 0.8 * s.E0 / s.Eg, s.E0 / s.Eg, 1.5 * s.E0 / s.Eg, 5 * s.E0 / s.Eg]) {
        const E = f * s.Eg
        const closed = (taucLorentzEps1(E, s.A, s.E0, s.C, s.Eg, 1.15) as number) - 1.15
        expect(Math.abs(closed - kramersKronig(E, s))).toBeLessThan(1e-6 * Math.max(1, Math.abs(closed)))
      }
    }
  })
  it('taucLorentzEps1 is continuous through E = Eg (the two divergent logarithms cancel)', () => {
    const s = SETS[0]
    const at = taucLorentzEps1(s.Eg, s.A, s.E0, s.C, s.Eg, 1) as number
    expectRel(taucLorentzEps1(s.Eg * (1 + 1e-9), s.A, s.E0, s.C, s.Eg, 1), at, 1e-7)
    expectRel(taucLorentzEps1(s.Eg * (1 - 1e-9), s.A, s.E0, s.C, s.Eg, 1), at, 1e-7)
    // and the two branches of the implementation meet at E = Eg/2
    expectRel(taucLorentzEps1(s.Eg * 0.5 * (1 - 1e-12), s.A, s.E0, s.C, s.Eg, 1), taucLorentzEps1(s.Eg * 0.5, s.A, s.E0, s.C, s.Eg, 1) as number, 1e-9)
  })
  it('taucLorentzEps1 at E = 0 is the static limit and tends to ε∞ far above E0', () => {
    const s = SETS[0]
    expectRel(taucLorentzEps1(0, s.A, s.E0, s.C, s.Eg, 1), taucLorentzEps1(1e-9 * eV, s.A, s.E0, s.C, s.Eg, 1) as number, 1e-9)
    expect(Math.abs((taucLorentzEps1(1e4 * eV, s.A, s.E0, s.C, s.Eg, 1.15) as number) - 1.15)).toBeLessThan(1e-4)
  })
  it('taucLorentzEps1 with Eg = 0 is a Lorentz-like oscillator without the gap terms', () => {
    const v = taucLorentzEps1(2 * eV, 100 * eV, 3.5 * eV, 2 * eV, 0, 1) as number
    expect(Number.isFinite(v)).toBe(true)
  })
  it('taucLorentzEps1 refuses C ≥ 2·E0, outside the model', () => {
    expect(() => taucLorentzEps1(2 * eV, 100 * eV, 1 * eV, 2 * eV, 0.5 * eV, 1)).toThrow(/tauc_lorentz_eps1: the broadening C must be below 2·E0/)
  })
  it('taucLorentzEps1 over an array of energies matches its scalars', () => {
    const s = SETS[0]
    const E = arr(0.5 * eV, 1.2 * eV, 3 * eV)
    const out = taucLorentzEps1(E, s.A, s.E0, s.C, s.Eg, 1)
    for (let i = 0; i < 3; i++) expect(el(out, i)).toBe(taucLorentzEps1(E[i], s.A, s.E0, s.C, s.Eg, 1))
  })
  it('worked examples of the doc comments', () => {
    expectRel(taucLorentzEps2(3 * eV, 100 * eV, 3.5 * eV, 2 * eV, 1.5 * eV), 11.27517, 1e-6)
    expectRel(taucLorentzEps1(3 * eV, 100 * eV, 3.5 * eV, 2 * eV, 1.5 * eV, 1), 13.50861, 1e-6)
  })
})
