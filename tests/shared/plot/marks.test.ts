import { describe, it, expect } from 'vitest'
import { placeMark } from '../../../shared/plot/marks'
import { HC_EV_NM } from '../../../shared/plot/units'
import { results } from './fixtures'

describe('placeMark', () => {
  it('placeMark("Eg", …, "eV") sits at the band gap on an energy axis', () => {
    const m = placeMark('Eg', results(), 'eV')
    expect(m).toEqual({ ok: true, value: { ref: 'Eg', at: 1.48, band: undefined, label: 'Eg = 1.48 eV' } })
  })
  it('placeMark("edge.Eg", …, "nm") sits at λ = hc/Eg on a wavelength axis with its error band', () => {
    const m = placeMark('edge.Eg', results(), 'nm')
    if (!m.ok) throw new Error(m.message)
    expect(m.value.at).toBeCloseTo(HC_EV_NM / 1.4812, 9)
    expect(m.value.band![0]).toBeCloseTo(HC_EV_NM / (1.4812 + 0.0021), 9)
    expect(m.value.band![1]).toBeCloseTo(HC_EV_NM / (1.4812 - 0.0021), 9)
    expect(m.value.label).toBe('edge.Eg = 1.4812 ± 0.0021 eV (837.1 nm)')
  })
  it('placeMark of a wavelength parameter lands on an energy axis', () => {
    const m = placeMark('lambda_c', results(), 'eV')
    expect(m.ok && m.value.at).toBeCloseTo(HC_EV_NM / 800, 12)
  })
  it('placeMark refuses a non-spectral axis, a non-energy value and a series', () => {
    const a = placeMark('Eg', results(), '%')
    expect(!a.ok && a.message).toBe('Mark "Eg" needs an energy or wavelength axis; this axis is in "%".')
    const b = placeMark('Jsc', results(), 'eV')
    expect(!b.ok && b.message).toContain('not an energy or a wavelength')
    const c = placeMark('E', results(), 'eV')
    expect(!c.ok && c.message).toContain('a mark needs one energy')
  })
  it('placeMark passes on why the referenced cell failed', () => {
    const m = placeMark('broken', results(), 'eV')
    expect(!m.ok && m.message).toBe('Mark "broken": Cell "broken" has an error: unknown function "alpah_edge".')
  })
})
