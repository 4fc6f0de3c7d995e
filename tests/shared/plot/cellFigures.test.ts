import { describe, it, expect } from 'vitest'
import { fitFigure, sweepFigure, sweepOutputs } from '../../../shared/plot/cellFigures'
import { E, results } from './fixtures'

describe('sweepOutputs', () => {
  it('sweepOutputs tells scalar outputs from array outputs', () => {
    expect(sweepOutputs(results().thick)).toEqual([
      { name: 'A1', scalar: false },
      { name: 'Jsc', scalar: true },
    ])
    expect(sweepOutputs(undefined)).toEqual([])
  })
})

describe('sweepFigure', () => {
  it('sweepFigure draws an array output as a family named by the parameter', () => {
    const m = sweepFigure(results().thick, { xValues: E, xUnit: 'eV', xName: 'E', parameterName: 'd', outputUnits: { A1: '%' } })
    expect(m.sweep?.view).toBe('curves')
    if (m.sweep?.view !== 'curves') return
    expect(m.sweep.parameterLabel).toBe('d')
    expect(m.sweep.family.curves).toHaveLength(3)
    expect(m.x.title).toBe('E (eV)')
    expect(m.y.title).toBe('A1 (%)')
    expect(m.messages).toEqual([])
  })
  it('sweepFigure draws a scalar output as one curve against the parameter', () => {
    const m = sweepFigure(results().thick, { output: 'Jsc', parameterName: 'd', outputUnits: { Jsc: 'mA/cm^2' } })
    expect(m.series).toHaveLength(1)
    expect(m.series[0].x).toEqual([100, 200, 300])
    expect(m.x.title).toBe('d (nm)')
    expect(m.y.title).toBe('Jsc (mA/cm²)')
  })
  it('sweepFigure as a map puts the parameter on y', () => {
    const m = sweepFigure(results().thick, { xValues: E, xUnit: 'eV', parameterName: 'd', view: 'map', outputUnits: { A1: '%' } })
    expect(m.sweep?.view).toBe('map')
    expect(m.y.title).toBe('d (nm)')
  })
  it('sweepFigure says why a failed sweep is not drawn', () => {
    const m = sweepFigure({ index: 0, name: 'thick', kind: 'sweep', status: 'blocked', error: 'blocked: input d failed' })
    expect(m.messages).toEqual(['Sweep "thick" is not drawn: Cell "thick" is blocked (blocked: input d failed); fix that input first.'])
  })
})

describe('fitFigure', () => {
  it('fitFigure draws the Tauc data, the fitted line in the accent, the window and the gap', () => {
    const m = fitFigure({ name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.55, to: 1.9, unit: 'eV' }, results())
    expect(m.series.map((s) => [s.name, s.style, s.color])).toEqual([
      ['data', 'points', '#23406e'],
      ['fitted line', 'line', 'accent'],
    ])
    expect(m.regions).toEqual([{ from: 1.55, to: 1.9, label: 'fit window' }])
    expect(m.marks[0].at).toBe(1.4812)
    expect(m.marks[0].label).toBe('edge.Eg = 1.4812 ± 0.0021 eV')
    expect(m.x.title).toBe('E (eV)')
    expect(m.y.range![0]).toBeLessThan(0)
  })
  it('fitFigure passes on why a fit cannot be drawn', () => {
    const m = fitFigure({ name: 'edge', method: 'tauc', x: 'nope', y: 'alpha' }, results())
    expect(m.series).toEqual([])
    expect(m.messages).toEqual(['There is no cell named "nope" in this sheet.'])
  })
})

describe('sweepFigure on a log sweep', () => {
  it('sweepFigure puts a log-spaced parameter on a log axis for scalar outputs', () => {
    const r = results().thick
    const m = sweepFigure({ ...r, value: { parameter: [10, 100, 1000], outputs: { Jsc: [1, 2, 3] } } }, { parameterName: 'd' })
    expect(m.x.scale).toBe('log')
    const lin = sweepFigure(r, { output: 'Jsc', parameterName: 'd' })
    expect(lin.x.scale).toBe('linear')
  })
})
