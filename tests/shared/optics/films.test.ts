import { describe, expect, it } from 'vitest'
import { filmReflectance, filmTransmittance } from '../../../shared/optics/films'
import { tmmNormal } from '../../../shared/optics/tmm'
import { reflectance } from '../../../shared/optics/slabs'
import { arr, el, expectRel } from './close'

// Closed forms at the design wavelength (H. A. Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2–3;
// E. Hecht, Optics, 4th ed. (2002), ch. 9 on interference). Floating-point cos(π/2) is 6e-17, so "exact" means to rounding.
const ROUNDING = 1e-12

/** Airy formula of one absorbing film with complex Fresnel coefficients, an independent check of the matrix code. */
function airyFilm(lambda: number, n: number, k: number, d: number, ns: number): { R: number; T: number } {
  type C = [number, number]
  const add = (a: C, b: C): C => [a[0] + b[0], a[1] + b[1]]
  const sub = (a: C, b: C): C => [a[0] - b[0], a[1] - b[1]]
  const mul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]]
  const div = (a: C, b: C): C => {
    const m = b[0] * b[0] + b[1] * b[1]
    return [(a[0] * b[0] + a[1] * b[1]) / m, (a[1] * b[0] - a[0] * b[1]) / m]
  }
  const abs2 = (a: C): number => a[0] * a[0] + a[1] * a[1]
  const N: C = [n, k] // e^(−iωt) convention: N = n + ik, field e^(iNk0z)
  const n0: C = [1, 0]
  const nS: C = [ns, 0]
  const r01 = div(sub(n0, N), add(n0, N))
  const r12 = div(sub(N, nS), add(N, nS))
  const t01 = div([2, 0], add(n0, N))
  const t12 = div(mul([2, 0], N), add(N, nS))
  const beta = (2 * Math.PI * d) / lambda
  // e^(2iβN) = e^(−2βk)·(cos 2βn + i sin 2βn)
  const ph: C = [Math.exp(-2 * beta * k) * Math.cos(2 * beta * n), Math.exp(-2 * beta * k) * Math.sin(2 * beta * n)]
  const ph1: C = [Math.exp(-beta * k) * Math.cos(beta * n), Math.exp(-beta * k) * Math.sin(beta * n)]
  const den = add([1, 0], mul(mul(r01, r12), ph))
  const r = div(add(r01, mul(r12, ph)), den)
  const t = div(mul(mul(t01, t12), ph1), den)
  return { R: abs2(r), T: ns * abs2(t) }
}

describe('filmReflectance / filmTransmittance (one coherent film on a substrate, from air)', () => {
  it('a quarter-wave MgF₂ film on glass reflects ((ns − n1²)/(ns + n1²))² ≈ 1.26 % at its design wavelength', () => {
    const lambda = 550e-9
    const d = lambda / (4 * 1.38)
    expectRel(filmReflectance(lambda, 1.38, 0, d, 1.52), ((1.52 - 1.38 ** 2) / (1.52 + 1.38 ** 2)) ** 2, ROUNDING)
    // "about 1.3 %" for single-layer MgF₂ on crown glass: Hecht, Optics ch. 9 (from memory)
    expect(filmReflectance(lambda, 1.38, 0, d, 1.52) as number).toBeCloseTo(0.0126, 4)
  })
  it('a quarter-wave film of index √ns is a perfect antireflection coating (R = 0)', () => {
    const n1 = Math.sqrt(1.52)
    expect(filmReflectance(600e-9, n1, 0, 600e-9 / (4 * n1), 1.52) as number).toBeLessThan(1e-30)
  })
  it('a half-wave film is an absentee layer: R is the bare substrate ((1 − ns)/(1 + ns))²', () => {
    const bare = ((1 - 1.5) / (1 + 1.5)) ** 2
    expectRel(filmReflectance(600e-9, 2, 0, 150e-9, 1.5), bare, ROUNDING)
    expectRel(filmTransmittance(600e-9, 2, 0, 150e-9, 1.5), 1 - bare, ROUNDING)
  })
  it('a film of zero thickness leaves the bare substrate', () => {
    expectRel(filmReflectance(600e-9, 3, 0.5, 0, 1.5), 0.04, ROUNDING)
  })
  it('a transparent film conserves energy, R + T = 1, at every wavelength', () => {
    const lam = Float64Array.from({ length: 50 }, (_, i) => 400e-9 + i * 10e-9)
    const R = filmReflectance(lam, 2.3, 0, 333e-9, 1.46)
    const T = filmTransmittance(lam, 2.3, 0, 333e-9, 1.46)
    for (let i = 0; i < lam.length; i++) expect(Math.abs(el(R, i) + el(T, i) - 1)).toBeLessThan(1e-14)
  })
  it('an absorbing film matches the Airy formula with complex Fresnel coefficients (Born & Wolf, Principles of Optics, optics of metals: absorbing films)', () => {
    for (const [lambda, n, k, d, ns] of [
      [500e-9, 3, 0.1, 200e-9, 1.5],
      [633e-9, 4.2, 0.03, 1e-6, 1.52],
      [400e-9, 2, 1.2, 20e-9, 1.46],
      [900e-9, 0.2, 5.5, 30e-9, 1.5], // metal-like film
    ]) {
      const ref = airyFilm(lambda, n, k, d, ns)
      expectRel(filmReflectance(lambda, n, k, d, ns), ref.R, 1e-11)
      expectRel(filmTransmittance(lambda, n, k, d, ns), ref.T, 1e-11)
    }
  })
  it('a very thick absorbing film transmits nothing and reflects like its bare surface, without overflow', () => {
    const R = filmReflectance(500e-9, 3, 0.5, 1e-3, 1.5) // Im δ ≈ 6e3: cosh would overflow
    const T = filmTransmittance(500e-9, 3, 0.5, 1e-3, 1.5)
    expectRel(R, reflectance(3, 0.5) as number, ROUNDING)
    expect(T).toBe(0)
  })
  it('filmReflectance broadcasts over wavelength, index and thickness arrays', () => {
    const lam = arr(500e-9, 600e-9)
    const d = arr(100e-9, 150e-9)
    const out = filmReflectance(lam, arr(2, 2), 0, d, 1.5)
    expect(el(out, 1)).toBe(filmReflectance(600e-9, 2, 0, 150e-9, 1.5))
  })
  it('worked examples of the doc comments', () => {
    expectRel(filmReflectance(600e-9, 2, 0, 75e-9, 1.5), 0.2066116, 1e-6)
    expectRel(filmTransmittance(600e-9, 2, 0, 150e-9, 1.5), 0.96, ROUNDING)
  })
})

describe('tmmNormal(lambda, layers, n0, nSub)', () => {
  it('tmmNormal of a (HL)³H quarter-wave stack gives R = ((1 − Y)/(1 + Y))², Y = (nH/nL)⁶·nH²/ns (Macleod, quarter-wave high reflector)', () => {
    const lambda = 550e-9
    const nH = 2.35
    const nL = 1.38
    const ns = 1.52
    const H = { n: nH, k: 0, d: lambda / (4 * nH) }
    const L = { n: nL, k: 0, d: lambda / (4 * nL) }
    const res = tmmNormal(lambda, [H, L, H, L, H, L, H], 1, ns)
    const Y = (nH / nL) ** 6 * (nH * nH) / ns
    expectRel(res.R, ((1 - Y) / (1 + Y)) ** 2, 1e-11)
    expect(Math.abs((res.R as number) + (res.T as number) - 1)).toBeLessThan(1e-14)
  })
  it('tmmNormal with no layers is the bare interface, from either ambient', () => {
    expectRel(tmmNormal(500e-9, [], 1, 1.5).R, 0.04, ROUNDING)
    expectRel(tmmNormal(500e-9, [], 1.33, 1.5).R, (0.17 / 2.83) ** 2, ROUNDING)
  })
  it('tmmNormal splits one film into two halves without changing R, T or A', () => {
    const one = tmmNormal(700e-9, [{ n: 3.2, k: 0.2, d: 300e-9 }], 1, 1.5)
    const two = tmmNormal(700e-9, [{ n: 3.2, k: 0.2, d: 100e-9 }, { n: 3.2, k: 0.2, d: 200e-9 }], 1, 1.5)
    expectRel(two.R, one.R as number, 1e-12)
    expectRel(two.T, one.T as number, 1e-12)
    expectRel(two.A, one.A as number, 1e-12)
  })
  it('tmmNormal answers numbers for scalars and Float64Arrays for any array input', () => {
    expect(typeof tmmNormal(500e-9, [{ n: 2, k: 0, d: 1e-7 }], 1, 1.5).R).toBe('number')
    expect(tmmNormal(arr(500e-9, 600e-9), [{ n: 2, k: 0, d: 1e-7 }], 1, 1.5).R).toBeInstanceOf(Float64Array)
  })
  it('tmmNormal refuses a negative thickness and a non-positive wavelength, naming the layer', () => {
    expect(() => tmmNormal(500e-9, [{ n: 2, k: 0, d: -1 }], 1, 1.5)).toThrow(/tmm: the thickness of layer 1/)
    expect(() => tmmNormal(0, [], 1, 1.5)).toThrow(/tmm: the wavelength must be positive/)
  })
  it('worked example of the doc comment', () => {
    const r = tmmNormal(550e-9, [{ n: 1.38, k: 0, d: 550e-9 / (4 * 1.38) }], 1, 1.52)
    expectRel(r.R, 0.0126008, 1e-5)
    expectRel(r.T, 0.987399, 1e-6)
    expect(r.A as number).toBeLessThan(1e-15)
  })
})
