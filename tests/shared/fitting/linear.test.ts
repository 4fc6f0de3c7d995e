import { describe, expect, it } from 'vitest'
import { FitError, linearFit } from '../../../shared/fitting'
import { expectRel } from '../optics/close'
import { gaussian, meanSd } from './noise'

describe('linearFit(x, y)', () => {
  it('linearFit of an exact line returns its slope and intercept exactly, with zero errors', () => {
    const f = linearFit([0, 1, 2, 3], [1, 3, 5, 7])
    expect(f.slope).toBe(2)
    expect(f.intercept).toBe(1)
    expect(f.slopeErr).toBe(0)
    expect(f.r2).toBe(1)
    expect(f.n).toBe(4)
  })
  it("linearFit reproduces Anscombe's first data set: slope 0.500, intercept 3.00, r² 0.667, standard errors 0.118 and 1.125 (F. J. Anscombe, Am. Stat. 27, 17 (1973); errors from memory)", () => {
    const x = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5]
    const y = [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68]
    const f = linearFit(x, y)
    expectRel(f.slope, 0.5001, 1e-3)
    expectRel(f.intercept, 3.0001, 1e-3)
    expectRel(f.r2, 0.6665, 1e-3)
    expectRel(f.slopeErr, 0.1179, 1e-3)
    expectRel(f.interceptErr, 1.1247, 1e-3)
  })
  it('linearFit covariance is [[s²/Sxx, −x̄s²/Sxx], [−x̄s²/Sxx, s²(1/n + x̄²/Sxx)]] (Draper & Smith ch. 1)', () => {
    const f = linearFit([1, 2, 4, 7], [2.1, 3.9, 8.2, 13.8])
    const s2 = f.sigma ** 2
    expectRel(f.covariance[0][0], s2 / f.sxx, 1e-14)
    expectRel(f.covariance[0][1], (-f.xMean * s2) / f.sxx, 1e-14)
    expect(f.covariance[1][0]).toBe(f.covariance[0][1])
    expectRel(f.covariance[1][1], s2 * (1 / 4 + f.xMean ** 2 / f.sxx), 1e-14)
  })
  it('linearFit standard errors match the scatter of fits to seeded noisy data (500 trials)', () => {
    const g = gaussian('linear-fit')
    const x = Array.from({ length: 20 }, (_, i) => i)
    const slopes: number[] = []
    let reported = 0
    for (let t = 0; t < 500; t++) {
      const y = x.map((v) => 0.3 * v - 2 + 0.5 * g())
      const f = linearFit(x, y)
      slopes.push(f.slope)
      reported += f.slopeErr / 500
    }
    const { mean, sd } = meanSd(slopes)
    expectRel(mean, 0.3, 0.01)
    expectRel(sd, reported, 0.1) // statistical tolerance of 500 trials
    expectRel(reported, 0.5 / Math.sqrt(665), 0.05) // σ/√Sxx, Sxx = Σ(i − 9.5)² = 665
  })
  it('linearFit stays accurate for SI photon energies (x ≈ 2e-19 J)', () => {
    const eV = 1.602176634e-19
    const x = Array.from({ length: 11 }, (_, i) => (1.5 + 0.01 * i) * eV)
    const y = x.map((v) => 4e-6 * (v - 1.48 * eV))
    const f = linearFit(x, y)
    expectRel(f.slope, 4e-6, 1e-10)
    expectRel(-f.intercept / f.slope, 1.48 * eV, 1e-10)
  })
  it('linearFit throws FitError with a plain sentence for too few points, equal x, non-finite values and unequal lengths', () => {
    expect(() => linearFit([1, 2], [1, 2])).toThrow(FitError)
    expect(() => linearFit([1, 2], [1, 2])).toThrow(/needs at least 3 points; it got 2/)
    expect(() => linearFit([1, 1, 1], [1, 2, 3])).toThrow(/All x values of the fit are equal/)
    expect(() => linearFit([1, 2, 3], [1, NaN, 3])).toThrow(/Point 2 of the fit is not a finite number/)
    expect(() => linearFit([1, 2, 3], [1, 2])).toThrow(/different lengths/)
  })
})
