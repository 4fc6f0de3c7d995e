import { describe, expect, it } from 'vitest'
import { MAX_FAMILY_CURVES, evenlySpread, limitForDrawing, thinSweepResult, thinningNote } from '../../../src/components/figures/drawable'
import { tickExponentFormat } from '../../../src/components/figures/plotlyFigure'
import { buildFigure } from '../../../shared/plot/figure'
import type { CellResult } from '../../../shared/schema/result'

const grid = <T,>(n: number, f: (i: number) => T): T[] => Array.from({ length: n }, (_, i) => f(i))

function sweep(steps: number, width: number): CellResult {
  return {
    index: 5,
    name: 'gaps',
    kind: 'sweep',
    status: 'ok',
    unit: 'eV',
    value: { parameter: grid(steps, (j) => 1 + j / (steps - 1)), outputs: { alpha: grid(steps, (j) => grid(width, (i) => i * j)) } },
  }
}

describe('evenlySpread', () => {
  it('evenlySpread(2000, 60) keeps the first and last of 60 evenly spaced indices', () => {
    const picks = evenlySpread(2000, 60)
    expect(picks).toHaveLength(60)
    expect(picks[0]).toBe(0)
    expect(picks[59]).toBe(1999)
    expect(new Set(picks.slice(1).map((p, k) => p - picks[k])).size).toBeLessThanOrEqual(2)
  })

  it('evenlySpread(n, count) keeps every index when there are no more than count', () => {
    expect(evenlySpread(4, 60)).toEqual([0, 1, 2, 3])
  })
})

describe('thinSweepResult', () => {
  it('thinSweepResult(2,000-step family, 60) keeps 60 steps, first and last included, with their rows', () => {
    const t = thinSweepResult(sweep(2000, 5), MAX_FAMILY_CURVES)
    const v = t.result!.value as { parameter: number[]; outputs: { alpha: number[][] } }
    expect([t.total, t.kept]).toEqual([2000, 60])
    expect(v.parameter[0]).toBe(1)
    expect(v.parameter[59]).toBe(2)
    expect(v.outputs.alpha[59]).toEqual(grid(5, (i) => i * 1999))
  })

  it('thinSweepResult(scalar outputs) leaves the sweep whole: it draws as one curve against the parameter', () => {
    const r: CellResult = { index: 0, name: 's', kind: 'sweep', status: 'ok', value: { parameter: grid(2000, (j) => j), outputs: { J: grid(2000, (j) => j * 2) } } }
    expect(thinSweepResult(r, 60).result).toBe(r)
  })
})

describe('limitForDrawing', () => {
  it('limitForDrawing(model) draws at most 60 curves of a family and says so', () => {
    const results = { E: { index: 0, name: 'E', kind: 'formula', status: 'ok', value: grid(5, (i) => i), unit: 'eV' } as CellResult, gaps: sweep(200, 5), alpha: { index: 1, name: 'alpha', kind: 'formula', status: 'ok', value: 0, unit: '1/cm' } as CellResult }
    const model = limitForDrawing(buildFigure({ kind: 'figure', traces: [{ x: 'E', y: 'alpha' }], sweep: 'gaps' }, results, { sweepParameters: { gaps: 'Eg' } }))
    expect(model.sweep?.view === 'curves' ? model.sweep.family.curves.length : 0).toBe(60)
    expect(model.messages).toContain(thinningNote('curves', 60, 200, 'Eg'))
  })
})

describe('tickExponentFormat', () => {
  it('tickExponentFormat writes everyday numbers plainly and very large or small ones as powers of ten', () => {
    expect(tickExponentFormat('linear', 10000)).toBe('none')
    expect(tickExponentFormat('linear', 0.25)).toBe('none')
    expect(tickExponentFormat('linear', 2e15)).toBe('power')
    expect(tickExponentFormat('linear', 3e-6)).toBe('power')
    expect(tickExponentFormat('log', 10000)).toBe('power')
  })
})
