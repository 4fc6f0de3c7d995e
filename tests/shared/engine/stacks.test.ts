import { describe, expect, it } from 'vitest'
import { filmReflectance, filmTransmittance } from '../../../shared/optics/films'
import { pick, run } from './helpers'

const grid = [{ kind: 'formula', name: 'lam', source: 'grid(400*nm, 900*nm, 101)', unit: 'nm' }]
const lamSI = Float64Array.from({ length: 101 }, (_, i) => 400e-9 + (500e-9 * i) / 100)

function stack(extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    kind: 'stack', name: 'cell1', wavelength: 'lam', ambient: '1', angle: '0*deg', polarization: 'unpolarized',
    layers: [{ name: 'absorber', thickness: '300*nm', n: 'n_abs', k: 'k_abs' }],
    substrate: { name: 'glass', n: '1.52', k: '0' },
    ...extra,
  }
}

const absorber = [
  { kind: 'formula', name: 'n_abs', source: 'cauchy_n(lam, 2.4, 0.05*um^2, 0)' },
  { kind: 'formula', name: 'k_abs', source: 'where(lam < 700*nm, 0.3, 0.01)' },
]

describe('stack cells', () => {
  it('a stack of one film on a semi-infinite substrate gives film_reflectance / film_transmittance over its grid', () => {
    const res = run([...grid, ...absorber, stack()])
    const c = pick(res, 'cell1')
    expect(c.status).toBe('ok')
    const v = c.value as Record<string, number[]>
    expect(v.wavelength[0]).toBe(400)
    expect(c.units).toEqual({ wavelength: 'nm', R: '1', T: '1', A: '1', A_absorber: '1', A_glass: '1' })
    const n = Float64Array.from(lamSI, (l) => 2.4 + 0.05e-12 / (l * l))
    const k = Float64Array.from(lamSI, (l) => (l < 700e-9 ? 0.3 : 0.01))
    const R = filmReflectance(lamSI, n, k, 300e-9, 1.52) as Float64Array
    const T = filmTransmittance(lamSI, n, k, 300e-9, 1.52) as Float64Array
    for (let i = 0; i < 101; i++) {
      expect(Math.abs(v.R[i] - R[i])).toBeLessThan(1e-12)
      expect(Math.abs(v.T[i] - T[i])).toBeLessThan(1e-12)
      expect(Math.abs(v.R[i] + v.T[i] + v.A_absorber[i] + v.A_glass[i] - 1)).toBeLessThan(1e-9)
    }
  })

  it('formulas read a stack as cell1.R, cell1.A_absorber; a missing output is an error listing the outputs', () => {
    const res = run([
      ...grid, ...absorber, stack(),
      { kind: 'formula', name: 'Amean', source: 'mean(cell1.A_absorber)', unit: '%' },
      { kind: 'formula', name: 'bad', source: 'cell1.A_ITO' },
    ])
    expect(pick(res, 'Amean').status).toBe('ok')
    expect(pick(res, 'Amean').dimension).toBe('dimensionless')
    expect(pick(res, 'bad').error).toBe('the stack cell1 has no result "A_ITO" (it has wavelength, R, T, A, A_absorber, A_glass)')
  })

  it('a thickness without a unit is an error saying how to write it; n with the wrong grid length names interpolate', () => {
    const noUnit = run([...grid, ...absorber, stack({ layers: [{ name: 'absorber', thickness: '300', n: 'n_abs', k: 'k_abs' }] })])
    expect(pick(noUnit, 'cell1').error).toBe('the thickness of layer absorber is a plain number, but it needs a length: write it with a unit, e.g. 500*nm')
    const short = run([...grid, { kind: 'formula', name: 'n_abs', source: 'grid(2, 3, 50)' }, absorber[1], stack()])
    expect(pick(short, 'cell1').error).toBe('the index n of layer absorber has 50 values but the wavelength grid has 101; put it on the grid, e.g. interpolate(lam, data.wavelength, data.n)')
  })

  it('a syntax error in one field names the field; two layers of one name are refused', () => {
    const bad = run([...grid, stack({ substrate: { name: 'glass', n: '1.52 +', k: '0' } })])
    expect(pick(bad, 'cell1').error).toMatch(/^the index n of the substrate glass: /)
    const twice = run([...grid, stack({ layers: [{ name: 'glass', thickness: '10*nm', n: '2', k: '0' }] })])
    expect(pick(twice, 'cell1').error).toBe('two layers are named glass; give each layer its own name (its absorptance is cell1.A_glass)')
  })

  it('an input that failed blocks the stack and what reads it', () => {
    const res = run([...grid, { kind: 'formula', name: 'n_abs', source: 'nope(1)' }, absorber[1], stack(), { kind: 'formula', name: 'x', source: 'cell1.R' }])
    expect(pick(res, 'cell1').status).toBe('blocked')
    expect(pick(res, 'x').error).toBe('blocked: input cell1 failed')
  })

  it('a sweep over a layer thickness re-runs the stack for each step', () => {
    const res = run([
      ...grid, ...absorber,
      { kind: 'parameter', name: 'd', value: 300, unit: 'nm' },
      stack({ layers: [{ name: 'absorber', thickness: 'd', n: 'n_abs', k: 'k_abs' }] }),
      { kind: 'formula', name: 'Aabs', source: 'cell1.A_absorber' },
      { kind: 'sweep', name: 'thick', parameter: 'd', from: 0, to: 300, steps: 4, unit: 'nm', outputs: ['Aabs'] },
    ])
    const rows = (pick(res, 'thick').value as { outputs: { Aabs: number[][] } }).outputs.Aabs
    // zero thickness absorbs nothing; the last row equals the stack's own value at 300 nm
    expect(Math.max(...rows[0])).toBeLessThan(1e-15)
    expect(rows[3]).toEqual(pick(res, 'Aabs').value)
  })

  it('a thick incoherent glass slide at 45° for p light conserves energy and its substrate absorbs through k', () => {
    const res = run([
      ...grid,
      stack({
        angle: '45*deg', polarization: 'p', layers: [],
        substrate: { name: 'glass', n: '1.52', k: '1e-6', thickness: '1*mm', coherent: false },
      }),
    ])
    const v = pick(res, 'cell1').value as Record<string, number[]>
    for (let i = 0; i < 101; i++) {
      expect(v.A_glass[i]).toBeGreaterThan(0.01)
      expect(Math.abs(v.R[i] + v.T[i] + v.A[i] - 1)).toBeLessThan(1e-9)
    }
  })
})
