import { describe, expect, it } from 'vitest'
import { FitError, taucFit, urbachFit } from '../../../shared/fitting'
import { alphaDirect, alphaEdge, alphaIndirect, alphaUrbach, edgeJunctionOffset } from '../../../shared/optics'
import { eV, expectRel } from '../optics/close'
import { gaussian, meanSd } from './noise'

const B5 = (4e9 * eV) / 1e-4 // the DESIGN §5 example sheet's 4e9 eV/cm²
const grid = (from: number, to: number, n: number): Float64Array =>
  Float64Array.from({ length: n }, (_, i) => (from + ((to - from) * i) / (n - 1)) * eV)

describe('taucFit(E, alpha, r, from, to)', () => {
  it('taucFit recovers Eg and B of a noise-free direct edge exactly (to rounding)', () => {
    const E = grid(1.2, 2.4, 601)
    const f = taucFit(E, alphaDirect(E, 1.5 * eV, B5) as Float64Array, 0.5, 1.55 * eV, 1.9 * eV)
    expectRel(f.Eg, 1.5 * eV, 1e-12)
    expectRel(f.B, B5, 1e-10)
    expect(f.Eg_err).toBeLessThan(1e-10 * f.Eg)
    expect(f.r2).toBeCloseTo(1, 12)
    expect(f.n).toBe(176)
  })
  it('taucFit recovers an indirect edge (r = 2) exactly, with the window given in either order', () => {
    const E = grid(1.0, 1.6, 301)
    const alpha = alphaIndirect(E, 1.12 * eV, 2e3) as Float64Array
    const f = taucFit(E, alpha, 2, 1.4 * eV, 1.2 * eV)
    expectRel(f.Eg, 1.12 * eV, 1e-12)
    expectRel(f.B, 2e3, 1e-10)
  })
  it('taucFit of the DESIGN §5 edge model (window 1.55–1.9 eV, above the Urbach junction) returns its Eg = 1.48 eV', () => {
    const E = grid(1.2, 2.4, 601)
    const alpha = alphaEdge(E, 1.48 * eV, B5, 0.5, 0.022 * eV) as Float64Array
    expect(1.48 * eV + edgeJunctionOffset(1.48 * eV, 0.5, 0.022 * eV)).toBeLessThan(1.55 * eV)
    const f = taucFit(E, alpha, 0.5, 1.55 * eV, 1.9 * eV)
    expectRel(f.Eg, 1.48 * eV, 1e-12)
  })
  it('taucFit on seeded noisy data recovers Eg within its reported uncertainty, and that uncertainty matches the scatter (400 trials)', () => {
    const g = gaussian('tauc')
    const E = grid(1.5, 1.9, 81)
    const clean = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    const gaps: number[] = []
    let reported = 0
    let within3 = 0
    for (let t = 0; t < 400; t++) {
      const noisy = clean.map((a) => a + 2e4 * g()) // 200 cm⁻¹ of detector noise
      const f = taucFit(E, noisy.map((a) => Math.max(a, 0)), 0.5, 1.6 * eV, 1.85 * eV)
      gaps.push(f.Eg)
      reported += f.Eg_err / 400
      if (Math.abs(f.Eg - 1.5 * eV) < 3 * f.Eg_err) within3++
    }
    const { mean, sd } = meanSd(gaps)
    expect(Math.abs(mean - 1.5 * eV)).toBeLessThan(3 * (sd / Math.sqrt(400)) + 1e-4 * eV)
    expectRel(sd, reported, 0.2) // 400 trials, and noise on α is only approximately Gaussian on (αE)²
    expect(within3 / 400).toBeGreaterThan(0.97)
  })
  it('taucFit ignores non-finite points outside the window but refuses them inside it', () => {
    const E = grid(1.2, 2.4, 121)
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    alpha[0] = NaN
    expect(() => taucFit(E, alpha, 0.5, 1.55 * eV, 1.9 * eV)).not.toThrow()
    alpha[50] = Infinity // 1.7 eV
    expect(() => taucFit(E, alpha, 0.5, 1.55 * eV, 1.9 * eV)).toThrow(/not a finite number at 1.700 eV, inside the Tauc fit window/)
  })
  it('taucFit throws FitError for a window with too few points, a negative α, a falling plot and r ≤ 0', () => {
    const E = grid(1.2, 2.4, 121) // 10 meV steps
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    expect(() => taucFit(E, alpha, 0.5, 1.601 * eV, 1.615 * eV)).toThrow(FitError)
    expect(() => taucFit(E, alpha, 0.5, 1.601 * eV, 1.615 * eV)).toThrow(/holds 1 point; a fit needs at least 3/)
    const neg = alpha.slice()
    neg[45] = -5
    expect(() => taucFit(E, neg, 0.5, 1.55 * eV, 1.9 * eV)).toThrow(/negative at 1.650 eV/)
    const falling = alpha.slice().reverse()
    expect(() => taucFit(E, falling, 0.5, 1.55 * eV, 1.9 * eV)).toThrow(/does not rise inside the window/)
    expect(() => taucFit(E, alpha, 0, 1.55 * eV, 1.9 * eV)).toThrow(/exponent r must be positive/)
    expect(() => taucFit(E, alpha.subarray(1), 0.5, 1.55 * eV, 1.9 * eV)).toThrow(/different lengths/)
  })
  it('taucFit below the gap (all α = 0) reports no band gap rather than a number', () => {
    const E = grid(1.2, 2.4, 121)
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    expect(() => taucFit(E, alpha, 0.5, 1.2 * eV, 1.45 * eV)).toThrow(FitError)
  })
})

describe('urbachFit(E, alpha, from, to)', () => {
  it('urbachFit recovers Eu of a noise-free tail exactly, and alpha0 at E0 (the top of the window) reproduces the line', () => {
    const E = grid(1.2, 1.5, 301)
    const alpha = alphaUrbach(E, 1e5, 1.5 * eV, 0.02 * eV) as Float64Array
    const f = urbachFit(E, alpha, 1.3 * eV, 1.45 * eV)
    expectRel(f.Eu, 0.02 * eV, 1e-12)
    expect(f.Eu_err).toBeLessThan(1e-10 * f.Eu)
    expectRel(f.E0, 1.45 * eV, 1e-9)
    expectRel(f.alpha0, alphaUrbach(f.E0, 1e5, 1.5 * eV, 0.02 * eV) as number, 1e-9)
    expectRel(alphaUrbach(1.35 * eV, f.alpha0, f.E0, f.Eu) as number, alphaUrbach(1.35 * eV, 1e5, 1.5 * eV, 0.02 * eV) as number, 1e-9)
  })
  it('urbachFit of the tail of alphaEdge returns the Urbach energy it was built with', () => {
    const E = grid(1.2, 1.6, 401)
    const alpha = alphaEdge(E, 1.48 * eV, B5, 0.5, 0.022 * eV) as Float64Array
    expectRel(urbachFit(E, alpha, 1.3 * eV, 1.45 * eV).Eu, 0.022 * eV, 1e-12)
  })
  it('urbachFit on seeded multiplicative noise recovers Eu within its reported uncertainty (400 trials)', () => {
    const g = gaussian('urbach')
    const E = grid(1.3, 1.45, 61)
    const clean = alphaUrbach(E, 1e5, 1.5 * eV, 0.02 * eV) as Float64Array
    const eus: number[] = []
    let reported = 0
    let within1 = 0
    for (let t = 0; t < 400; t++) {
      const f = urbachFit(E, clean.map((a) => a * Math.exp(0.05 * g())), 1.3 * eV, 1.45 * eV)
      eus.push(f.Eu)
      reported += f.Eu_err / 400
      if (Math.abs(f.Eu - 0.02 * eV) < f.Eu_err) within1++
    }
    const { sd } = meanSd(eus)
    expectRel(sd, reported, 0.1) // ln α carries exactly Gaussian noise here; 400 trials
    expect(within1 / 400).toBeGreaterThan(0.6) // 68 % expected
    expect(within1 / 400).toBeLessThan(0.76)
  })
  it('urbachFit throws FitError for α ≤ 0 in the window (no logarithm), too few points and a falling ln α', () => {
    const E = grid(1.2, 1.5, 31)
    const alpha = alphaUrbach(E, 1e5, 1.5 * eV, 0.02 * eV) as Float64Array
    const zero = alpha.slice()
    zero[15] = 0
    expect(() => urbachFit(E, zero, 1.3 * eV, 1.45 * eV)).toThrow(/zero at 1.350 eV, inside the Urbach fit window; an Urbach fit takes its logarithm/)
    expect(() => urbachFit(E, alpha, 1.301 * eV, 1.305 * eV)).toThrow(/holds 0 points/)
    expect(() => urbachFit(E, alpha.slice().reverse(), 1.3 * eV, 1.45 * eV)).toThrow(/does not rise/)
  })
})
