import { describe, expect, it } from 'vitest'
import { weightedLinearFit } from '../../../shared/fitting/linear'
import { pick, run } from './helpers'

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b)

/**
 * Weighted least-squares straight line by the determinant formulas of P. R. Bevington, D. K. Robinson, Data Reduction
 * and Error Analysis for the Physical Sciences, 3rd ed. (2003), eqs. 6.12 and 6.21–6.22:
 * Δ = Σw·Σwx² − (Σwx)², a = (Σwx²·Σwy − Σwx·Σwxy)/Δ, b = (Σw·Σwxy − Σwx·Σwy)/Δ, σa² = Σwx²/Δ, σb² = Σw/Δ,
 * cov(a, b) = −Σwx/Δ, w = 1/σ². Computed here, independently of the code under test (which uses centred sums).
 */
function bevington(x: number[], y: number[], s: number[]) {
  let S = 0, Sx = 0, Sy = 0, Sxx = 0, Sxy = 0
  x.forEach((xi, i) => {
    const w = 1 / (s[i] * s[i])
    S += w
    Sx += w * xi
    Sy += w * y[i]
    Sxx += w * xi * xi
    Sxy += w * xi * y[i]
  })
  const D = S * Sxx - Sx * Sx
  const a = (Sxx * Sy - Sx * Sxy) / D
  const b = (S * Sxy - Sx * Sy) / D
  const chi2 = x.reduce((acc, xi, i) => acc + ((y[i] - a - b * xi) / s[i]) ** 2, 0)
  return { a, b, va: Sxx / D, vb: S / D, cov: -Sx / D, chi2 }
}

// a line with scatter and very unequal σ (the points with large σ are the ones pulled off the line)
const xs = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9]
const sig = [0.1, 0.1, 0.5, 0.1, 2, 0.2, 0.1, 1, 0.1, 0.3]
const ys = xs.map((x, i) => 2 * x + 1 + [0.05, -0.08, 0.6, 0.02, -2.5, 0.1, -0.04, 1.2, 0.07, -0.2][i])

describe('weighted fits', () => {
  it('weightedLinearFit equals the closed-form weighted least squares of Bevington & Robinson ch. 6', () => {
    const f = weightedLinearFit(xs, ys, sig)
    const ref = bevington(xs, ys, sig)
    expect(rel(f.intercept, ref.a)).toBeLessThan(1e-12)
    expect(rel(f.slope, ref.b)).toBeLessThan(1e-12)
    expect(rel(f.interceptErr, Math.sqrt(ref.va))).toBeLessThan(1e-12)
    expect(rel(f.slopeErr, Math.sqrt(ref.vb))).toBeLessThan(1e-12)
    expect(rel(f.covariance[0][1], ref.cov)).toBeLessThan(1e-12)
    expect(rel(f.chi2, ref.chi2)).toBeLessThan(1e-12)
  })

  it('a model fit with a σ cell minimises Σ((y − f)/σ)² and takes its errors from σ (Bevington & Robinson ch. 6)', () => {
    const cells = (withSigma: boolean) => [
      { kind: 'spectrum', name: 'data', columns: { x: { unit: '', values: xs }, y: { unit: '', values: ys }, s: { unit: '', values: sig } } },
      { kind: 'formula', name: 'x', source: 'data.x' },
      { kind: 'formula', name: 'y', source: 'data.y' },
      { kind: 'formula', name: 'sy', source: 'data.s' },
      { kind: 'parameter', name: 'a', value: 0 },
      { kind: 'parameter', name: 'b', value: 1 },
      { kind: 'formula', name: 'line', source: 'a + b*x' },
      { kind: 'fit', name: 'lin', method: 'model', x: 'x', y: 'y', model: 'line', parameters: [{ name: 'a' }, { name: 'b' }], ...(withSigma ? { sigma: 'sy' } : {}) },
    ]
    const ref = bevington(xs, ys, sig)
    const fit = pick(run(cells(true)), 'lin')
    const v = fit.value as Record<string, number>
    expect(rel(v.a, ref.a)).toBeLessThan(1e-7)
    expect(rel(v.b, ref.b)).toBeLessThan(1e-7)
    expect(rel(v.a_err, Math.sqrt(ref.va))).toBeLessThan(1e-5)
    expect(rel(v.b_err, Math.sqrt(ref.vb))).toBeLessThan(1e-5)
    expect(rel(v.chi2, ref.chi2)).toBeLessThan(1e-7)
    expect(rel(v.reducedChi2, ref.chi2 / 8)).toBeLessThan(1e-7)
    expect(fit.units?.chi2).toBe('1')
    // unweighted, the outlier at x = 4 pulls the line: the two fits differ
    const plain = pick(run(cells(false)), 'lin').value as Record<string, number>
    expect(Math.abs(plain.b - v.b)).toBeGreaterThan(0.01)
  })

  it('a tauc fit with a σ cell weights (αE)² by its propagated σ; Eg ± error agree with the full-covariance closed form', () => {
    // α at 11 energies on a direct edge, with invented scatter and σ (Halvorsen lab demo numbers)
    const E = Array.from({ length: 11 }, (_, i) => 1.6 + i * 0.04)
    const scatter = [0.01, -0.02, 0.015, 0, -0.01, 0.02, -0.015, 0.005, 0.01, -0.005, 0]
    const alpha = E.map((e, i) => (Math.sqrt(4e9 * (e - 1.5)) / e) * (1 + scatter[i]))
    const sA = alpha.map((a, i) => a * (0.01 + 0.002 * i))
    const res = run([
      { kind: 'spectrum', name: 'm', columns: { E: { unit: 'eV', values: E }, a: { unit: '1/cm', values: alpha }, s: { unit: '1/cm', values: sA } } },
      { kind: 'formula', name: 'Ex', source: 'm.E', unit: 'eV' },
      { kind: 'formula', name: 'ax', source: 'm.a', unit: '1/cm' },
      { kind: 'formula', name: 'sx', source: 'm.s', unit: '1/cm' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'Ex', y: 'ax', r: 0.5, sigma: 'sx', unit: 'eV' },
    ])
    const fit = pick(res, 'edge')
    expect(fit.status).toBe('ok')
    const v = fit.value as Record<string, number>
    // by hand in eV and 1/cm: y = (αE)², σy = 2·αE·E·σα; Eg = −a/b, var(Eg) = Eg²·(σa²/a² + σb²/b² − 2·cov/(a·b))
    const y = E.map((e, i) => (alpha[i] * e) ** 2)
    const sy = E.map((e, i) => 2 * alpha[i] * e * e * sA[i])
    const ref = bevington(E, y, sy)
    const Eg = -ref.a / ref.b
    const varEg = Eg * Eg * (ref.va / (ref.a * ref.a) + ref.vb / (ref.b * ref.b) - (2 * ref.cov) / (ref.a * ref.b))
    expect(rel(v.Eg, Eg)).toBeLessThan(1e-9)
    expect(rel(v.Eg_err, Math.sqrt(varEg))).toBeLessThan(1e-6)
    expect(rel(v.B, ref.b)).toBeLessThan(1e-9)
    expect(rel(v.chi2, ref.chi2)).toBeLessThan(1e-6)
    expect(fit.units?.chi2).toBe('1')
  })

  it('a σ cell of another length, another dimension, or with a zero inside the window is a clear error', () => {
    const base = [
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 11)', unit: 'eV' },
      { kind: 'formula', name: 'alpha', source: 'alpha_urbach(E, 1e5/cm, 2.5*eV, 50*meV)', unit: '1/cm' },
    ]
    const fit = { kind: 'fit', name: 'tail', method: 'urbach', x: 'E', y: 'alpha', sigma: 's' }
    const err = (source: string, unit?: string) => pick(run([...base, { kind: 'formula', name: 's', source, ...(unit ? { unit } : {}) }, fit]), 'tail').error
    expect(err('grid(1/cm, 2/cm, 5)', '1/cm')).toBe('the σ cell s has 5 values but the y cell alpha has 11; give one standard deviation per point')
    expect(err('0.1*E')).toBe('the σ cell s is an energy (eV) but the y cell alpha is an inverse length (1/cm); standard deviations are in y\'s units')
    expect(err('where(E > 1.5*eV, 0/cm, 0.1*alpha)', '1/cm')).toBe('the σ cell s is 0 at E = 1.6 eV, inside the window; every point of a weighted fit needs a standard deviation above zero')
  })

  it("a model fit shows χ² and residuals in the y cell's display unit", () => {
    const E = Array.from({ length: 21 }, (_, i) => 1.3 + i * 0.01)
    const a = E.map((e, i) => 1e4 * Math.exp((e - 1.5) / 0.03) * (1 + (i % 3 === 0 ? 0.02 : -0.01)))
    const res = run([
      { kind: 'spectrum', name: 'm', columns: { E: { unit: 'eV', values: E }, a: { unit: '1/cm', values: a } } },
      { kind: 'formula', name: 'Ex', source: 'm.E', unit: 'eV' },
      { kind: 'formula', name: 'ax', source: 'm.a', unit: '1/cm' },
      { kind: 'parameter', name: 'Eu', value: 25, unit: 'meV' },
      { kind: 'formula', name: 'model', source: 'alpha_urbach(Ex, 1e4/cm, 1.5*eV, Eu)', unit: '1/cm' },
      { kind: 'fit', name: 'tail', method: 'model', x: 'Ex', y: 'ax', model: 'model', parameters: [{ name: 'Eu' }] },
      { kind: 'formula', name: 'chi_si', source: 'tail.chi2' },
    ])
    const fit = pick(res, 'tail')
    const v = fit.value as Record<string, number | number[]>
    expect(fit.units).toMatchObject({ Eu: 'meV', chi2: '(1/cm)^2', residuals: '1/cm' })
    // χ² in (1/cm)² is the SI χ² (1/m)² divided by 100²; residuals are α − model in 1/cm, of the data's size
    expect(rel(v.chi2 as number, (pick(res, 'chi_si').value as number) / 1e4)).toBeLessThan(1e-12)
    const resid = v.residuals as number[]
    expect(Math.max(...resid.map(Math.abs))).toBeLessThan(0.05 * Math.max(...a))
    expect(Math.max(...resid.map(Math.abs))).toBeGreaterThan(1)
  })
})
