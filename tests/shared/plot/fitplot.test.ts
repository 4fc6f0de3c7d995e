import { describe, it, expect } from 'vitest'
import { fitPlotData, taucPower, windowFit } from '../../../shared/plot/fitplot'
import { HC_EV_NM } from '../../../shared/plot/units'
import type { CellResult } from '../../../shared/schema/result'
import { E, alpha, results } from './fixtures'

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b)

describe('taucPower', () => {
  it('taucPower(r) writes 1/r for the four allowed/forbidden transitions', () => {
    // exponents of Tauc, Grigorovici & Vancu, phys. stat. sol. 15, 627 (1966) and common practice
    expect(taucPower(0.5)).toBe('²')
    expect(taucPower(2)).toBe('^½')
    expect(taucPower(1.5)).toBe('^(2/3)')
    expect(taucPower(3)).toBe('^(1/3)')
    expect(taucPower(0.7)).toBe('^(1/0.7)')
  })
})

describe('fitPlotData', () => {
  const spec = { name: 'edge', method: 'tauc' as const, x: 'E', y: 'alpha', r: 0.5, from: 1.55, to: 1.9, unit: 'eV' }

  it('fitPlotData (tauc) gives (αE)² in cm⁻¹·eV and a line through (Eg, 0) along the data', () => {
    const r = fitPlotData(spec, results())
    if (!r.ok) throw new Error(r.message)
    const d = r.value
    // closed form of the fixture: (αE)² = 2.5e9 (E − 1.48)
    const i = E.findIndex((e) => Math.abs(e - 1.8) < 1e-9)
    expect(rel(d.y[i], 2.5e9 * (1.8 - 1.48))).toBeLessThan(1e-12)
    expect(d.y[0]).toBe(0)
    expect(d.window).toEqual([1.55, 1.9])
    expect(d.line!.x[0]).toBe(1.4812)
    expect(d.line!.y[0]).toBe(0)
    // the line passes through the window's centroid, so at E = 1.8 it is within 0.5 % of the exact data
    const slope = (d.line!.y[1] - d.line!.y[0]) / (d.line!.x[1] - d.line!.x[0])
    expect(rel(slope * (1.8 - 1.4812), 2.5e9 * (1.8 - 1.48))).toBeLessThan(5e-3)
    expect(d.result).toBe('Eg = 1.4812 ± 0.0021 eV')
    expect(d.yTitle).toContain('(αE)²')
    expect(d.notes).toEqual([])
  })

  it('fitPlotData takes x in nm and α in 1/m and still plots against eV with α in cm⁻¹', () => {
    const base = results()
    const rs: Record<string, CellResult> = {
      ...base,
      lam: { index: 20, name: 'lam', kind: 'formula', status: 'ok', value: E.map((e) => HC_EV_NM / e), unit: 'nm' },
      alpha_m: { index: 21, name: 'alpha_m', kind: 'formula', status: 'ok', value: alpha.map((a) => a * 100), unit: '1/m' },
    }
    const r = fitPlotData({ ...spec, x: 'lam', y: 'alpha_m', from: HC_EV_NM / 1.55, to: HC_EV_NM / 1.9 }, rs)
    if (!r.ok) throw new Error(r.message)
    expect(r.value.x[6]).toBeCloseTo(E[6], 12)
    expect(rel(r.value.y[6], 2.5e9 * (E[6] - 1.48))).toBeLessThan(1e-9)
    expect(r.value.window![0]).toBeCloseTo(1.55, 12)
    expect(r.value.window![1]).toBeCloseTo(1.9, 12)
  })

  it('fitPlotData (urbach) gives ln α and a line of slope 1/Eu', () => {
    const Eu = 0.025
    const tail = E.map((e) => 1e4 * Math.exp((e - 1.5) / Eu))
    const rs: Record<string, CellResult> = {
      ...results(),
      tail: { index: 30, name: 'tail', kind: 'formula', status: 'ok', value: tail, unit: '1/cm' },
      urb: { index: 31, name: 'urb', kind: 'fit', status: 'ok', value: { Eu: 25, Eu_err: 0.4, r2: 1 }, unit: 'meV' },
    }
    const r = fitPlotData({ name: 'urb', method: 'urbach', x: 'E', y: 'tail', from: 1.25, to: 1.45, unit: 'meV' }, rs)
    if (!r.ok) throw new Error(r.message)
    expect(r.value.xUnit).toBe('meV')
    expect(r.value.x[1]).toBeCloseTo(1300, 9)
    expect(r.value.y[1]).toBeCloseTo(Math.log(1e4) + (1.3 - 1.5) / Eu, 9)
    const { x, y } = r.value.line!
    expect((y[1] - y[0]) / (x[1] - x[0])).toBeCloseTo(1 / 25, 12)
    // exact data: the centroid line is the data's own line
    expect(y[0]).toBeCloseTo(Math.log(1e4) + (x[0] / 1000 - 1.5) / Eu, 9)
    expect(r.value.result).toBe('Eu = 25.00 ± 0.40 meV')
  })

  it('fitPlotData still gives the data, with a sentence, when the fit failed', () => {
    const rs = { ...results(), edge: { index: 6, name: 'edge', kind: 'fit', status: 'error' as const, error: 'fewer than 3 points in the window 1.55–1.56 eV' } }
    const r = fitPlotData(spec, rs)
    if (!r.ok) throw new Error(r.message)
    expect(r.value.line).toBeUndefined()
    expect(r.value.notes).toEqual(['Cell "edge" has an error: fewer than 3 points in the window 1.55–1.56 eV.'])
  })

  it('fitPlotData refuses series of different lengths and a non-energy x, naming the cells', () => {
    expect(fitPlotData({ ...spec, y: 'short' }, results())).toEqual({
      ok: false,
      message: '"E" has 13 values but "short" has 3; they must have the same length.',
    })
    const r = fitPlotData({ ...spec, x: 'A1', y: 'alpha' }, results())
    expect(!r.ok && r.message).toContain('needs photon energies')
  })
})

describe('windowFit', () => {
  const spec = { name: 'edge', method: 'tauc' as const, x: 'E', y: 'alpha', r: 0.5, from: 1.55, to: 1.9, unit: 'eV' }

  it('windowFit refits a straight Tauc segment to the gap of the closed form, with zero residuals and the line from Eg', () => {
    const r = fitPlotData(spec, results())
    if (!r.ok) throw new Error(r.message)
    // the fixture's closed form (αE)² = 2.5e9 (E − 1.48) above 1.48 eV
    const f = windowFit(r.value, 1.6, 1.9)
    if (!f.ok) throw new Error(f.message)
    expect(f.value.quantity).toBe('Eg')
    expect(rel(f.value.value, 1.48)).toBeLessThan(1e-12)
    expect(f.value.r2).toBeCloseTo(1, 12)
    expect(f.value.line.x[0]).toBeCloseTo(1.48, 12)
    expect(Math.abs(f.value.line.y[0])).toBeLessThan(1e-3 * 2.5e9 * 0.42)
    for (const res of f.value.residuals.y) expect(Math.abs(res)).toBeLessThan(1e-6 * 2.5e9)
    expect(f.value.residuals.x.every((x) => x >= 1.6 - 1e-12 && x <= 1.9 + 1e-12)).toBe(true)
  })

  it('windowFit says why a window gives no fit: too few points', () => {
    const r = fitPlotData(spec, results())
    if (!r.ok) throw new Error(r.message)
    const f = windowFit(r.value, 1.6001, 1.6002)
    expect(f.ok).toBe(false)
    if (!f.ok) expect(f.message).toMatch(/holds 0 points; a fit needs at least 3/)
  })
})
