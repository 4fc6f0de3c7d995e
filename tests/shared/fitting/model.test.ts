import { describe, expect, it } from 'vitest'
import { FitError, fitModel } from '../../../shared/fitting'
import { alphaEdge } from '../../../shared/optics'
import { eV, expectRel } from '../optics/close'
import { gaussian, meanSd } from './noise'

// NIST Statistical Reference Datasets, nonlinear regression (https://www.itl.nist.gov/div898/strd/nls/):
// data and certified values as published by NIST (recalled from memory; the fits below reproduce them).
const MISRA1A = {
  x: [77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0],
  y: [10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78],
  b: [2.3894212918e2, 5.5015643181e-4],
  se: [2.7070075241, 7.2668688436e-6],
  rss: 1.2455138894e-1,
}
const BOXBOD = {
  x: [1, 2, 3, 5, 7, 10],
  y: [109, 149, 149, 191, 213, 224],
  b: [2.1380940889e2, 5.4723748542e-1],
  se: [1.2354515176e1, 1.0455993237e-1],
  rss: 1.1680088766e3,
}
const saturating = (x: number[]) => ([b1, b2]: number[]) => Float64Array.from(x, (t) => b1 * -Math.expm1(-b2 * t))

describe('fitModel({ evaluate, y, start, min?, max?, weights?, maxIterations? })', () => {
  it('fitModel reproduces the NIST certified values of Misra1a from start 1 (b1 = 500, b2 = 1e-4)', () => {
    const f = fitModel({ evaluate: saturating(MISRA1A.x), y: MISRA1A.y, start: [500, 1e-4] })
    expect(f.converged).toBe(true)
    expectRel(f.params[0], MISRA1A.b[0], 1e-7)
    expectRel(f.params[1], MISRA1A.b[1], 1e-7)
    expectRel(f.chi2, MISRA1A.rss, 1e-8)
    expectRel(f.errors[0], MISRA1A.se[0], 1e-4) // finite-difference Jacobian
    expectRel(f.errors[1], MISRA1A.se[1], 1e-4)
  })
  it('fitModel reproduces the NIST certified values of BoxBOD (higher difficulty) from start 2 (100, 0.75)', () => {
    const f = fitModel({ evaluate: saturating(BOXBOD.x), y: BOXBOD.y, start: [100, 0.75] })
    expect(f.converged).toBe(true)
    expectRel(f.params[0], BOXBOD.b[0], 1e-6)
    expectRel(f.params[1], BOXBOD.b[1], 1e-6)
    expectRel(f.chi2, BOXBOD.rss, 1e-8)
    expectRel(f.errors[0], BOXBOD.se[0], 1e-4)
    expectRel(f.errors[1], BOXBOD.se[1], 1e-4)
  })
  it('fitModel recovers a noise-free exponential exactly, with residuals and χ² near zero', () => {
    const x = Array.from({ length: 50 }, (_, i) => i * 0.2)
    const y = Float64Array.from(x, (t) => 2 * Math.exp(-0.5 * t))
    const f = fitModel({ evaluate: ([a, b]) => Float64Array.from(x, (t) => a * Math.exp(-b * t)), y, start: [1, 1] })
    expectRel(f.params[0], 2, 1e-10)
    expectRel(f.params[1], 0.5, 1e-10)
    expect(f.chi2).toBeLessThan(1e-20)
    expect(f.residuals).toHaveLength(50)
    expect(f.converged).toBe(true)
  })
  it('fitModel recovers Eg, B and Eu of a noise-free alpha_edge in SI units (parameters 1e-19 J beside 1e-6 J/m²)', () => {
    const E = Float64Array.from({ length: 241 }, (_, i) => (1.3 + i * 0.0025) * eV)
    const B = (4e9 * eV) / 1e-4
    const y = alphaEdge(E, 1.48 * eV, B, 0.5, 0.022 * eV) as Float64Array
    const f = fitModel({
      evaluate: ([Eg, b, Eu]) => alphaEdge(E, Eg, b, 0.5, Eu) as Float64Array,
      y,
      start: [1.45 * eV, 0.5 * B, 0.03 * eV],
      min: [1 * eV, 0, 0.001 * eV],
      max: [2 * eV, Infinity, 0.1 * eV],
      names: ['Eg', 'B', 'Eu'],
    })
    expectRel(f.params[0], 1.48 * eV, 1e-9)
    expectRel(f.params[1], B, 1e-8)
    expectRel(f.params[2], 0.022 * eV, 1e-8)
  })
  it('fitModel standard errors and χ² agree with the scatter of seeded noisy fits (weights 1/σ², 200 trials)', () => {
    const g = gaussian('model')
    const x = Array.from({ length: 40 }, (_, i) => i * 0.25)
    const sigma = 0.02
    const model = ([a, b]: number[]) => Float64Array.from(x, (t) => a * Math.exp(-b * t))
    const as: number[] = []
    let reported = 0
    let reduced = 0
    let within2 = 0
    for (let t = 0; t < 200; t++) {
      const y = Float64Array.from(x, (v) => 2 * Math.exp(-0.5 * v) + sigma * g())
      const f = fitModel({ evaluate: model, y, start: [1, 1], weights: 1 / sigma ** 2 })
      as.push(f.params[0])
      reported += f.errors[0] / 200
      reduced += f.reducedChi2 / 200
      if (Math.abs(f.params[1] - 0.5) < 2 * f.errors[1]) within2++
    }
    const { sd } = meanSd(as)
    expectRel(sd, reported, 0.15) // statistical tolerance of 200 trials
    expectRel(reduced, 1, 0.05) // χ²/(n − p) ≈ 1 when the weights are the true 1/σ²
    expect(within2 / 200).toBeGreaterThan(0.9) // 95 % expected
  })
  it('fitModel keeps a parameter inside its bounds when the data pull it outside', () => {
    const x = Array.from({ length: 20 }, (_, i) => i)
    const y = Float64Array.from(x, (t) => 3 * t + 1)
    const f = fitModel({ evaluate: ([a, b]) => Float64Array.from(x, (t) => a * t + b), y, start: [1, 0], max: [2, Infinity] })
    expect(f.params[0]).toBeLessThanOrEqual(2)
    expectRel(f.params[0], 2, 1e-9)
    expect(f.converged).toBe(true)
  })
  it('fitModel throws FitError for too few points, a start outside its bounds, a wrong-length or non-finite model, and a singular problem', () => {
    const x = [1, 2, 3]
    const line = ([a, b]: number[]) => Float64Array.from(x, (t) => a * t + b)
    expect(() => fitModel({ evaluate: line, y: [1, 2], start: [1, 1] })).toThrow(FitError)
    expect(() => fitModel({ evaluate: line, y: [1, 2], start: [1, 1] })).toThrow(/needs more than 2 data points; it got 2/)
    expect(() => fitModel({ evaluate: line, y: [1, 2, 3], start: [5, 0], max: [2, 1], names: ['slope', 'offset'] })).toThrow(
      /The start value of slope \(5\) lies outside its bounds/,
    )
    expect(() => fitModel({ evaluate: () => new Float64Array(2), y: [1, 2, 3], start: [1, 1] })).toThrow(/gave 2 values for 3 data points/)
    expect(() => fitModel({ evaluate: () => Float64Array.of(NaN, 1, 1), y: [1, 2, 3], start: [1, 1] })).toThrow(/not a finite number at the start values/)
    expect(() =>
      fitModel({ evaluate: ([a, b]) => Float64Array.from(x, (t) => (a + b) * t), y: [1, 2, 3], start: [1, 1] }),
    ).toThrow(/The fit is singular/)
    expect(() => fitModel({ evaluate: line, y: [1, NaN, 3], start: [1, 1] })).toThrow(/Data point 2 is not a finite number/)
  })
  it('fitModel lets an error thrown by the model itself through unchanged', () => {
    class Budget extends Error {}
    let calls = 0
    const evaluate = ([a]: number[]): Float64Array => {
      if (++calls > 3) throw new Budget('over the time budget')
      return Float64Array.of(a, 2 * a, 3 * a)
    }
    expect(() => fitModel({ evaluate, y: [1, 2, 3.5], start: [0.5] })).toThrow(Budget)
  })
  it('fitModel stops at maxIterations and says it did not converge', () => {
    const f = fitModel({ evaluate: saturating(MISRA1A.x), y: MISRA1A.y, start: [500, 1e-4], maxIterations: 2 })
    expect(f.iterations).toBe(2)
    expect(f.converged).toBe(false)
  })
})
