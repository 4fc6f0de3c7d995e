import { describe, it, expect } from 'vitest'
import { sweepFamily, sweepMap } from '../../../shared/plot/sweep'
import { E, results } from './fixtures'

describe('sweepFamily', () => {
  it('sweepFamily gives one curve per parameter value against the x series', () => {
    const r = sweepFamily(results().thick, { output: 'A1', xValues: E, xUnit: 'eV' })
    if (!r.ok) throw new Error(r.message)
    expect(r.value.mode).toBe('family')
    expect(r.value.curves.map((c) => c.parameter)).toEqual([100, 200, 300])
    expect(r.value.curves[1].x).toEqual(E)
    expect(r.value.curves[1].y[0]).toBe(0.2)
    expect(r.value.xUnit).toBe('eV')
    expect(r.value.parameterUnit).toBe('nm')
    expect(r.value.note).toBeUndefined()
  })
  it('sweepFamily of a scalar output is one curve of the output against the parameter', () => {
    const r = sweepFamily(results().thick, { output: 'Jsc' })
    if (!r.ok) throw new Error(r.message)
    expect(r.value.mode).toBe('single')
    expect(r.value.curves).toEqual([{ parameter: NaN, x: [100, 200, 300], y: [10, 15, 18] }])
    expect(r.value.xUnit).toBe('nm')
  })
  it('sweepFamily draws against point number, and says so, when the x series does not fit', () => {
    const r = sweepFamily(results().thick, { output: 'A1', xValues: [1, 2, 3] })
    if (!r.ok) throw new Error(r.message)
    expect(r.value.curves[0].x).toEqual(E.map((_, i) => i))
    expect(r.value.note).toBe('The x series has 3 values but each row has 13; drawn against point number instead.')
  })
  it('sweepFamily takes the first output when none is named', () => {
    const r = sweepFamily(results().thick)
    expect(r.ok && r.value.output).toBe('A1')
    expect(r.ok && r.value.outputs).toEqual(['A1', 'Jsc'])
  })
  it('sweepFamily names a missing output, a failed sweep and a cell that is not a sweep', () => {
    expect(sweepFamily(results().thick, { output: 'R' })).toEqual({ ok: false, message: 'Sweep "thick" has no output "R"; its outputs are A1, Jsc.' })
    expect(sweepFamily({ index: 1, name: 'thick', kind: 'sweep', status: 'error', error: 'parameter d not found' })).toEqual({
      ok: false,
      message: 'Cell "thick" has an error: parameter d not found.',
    })
    expect(sweepFamily(results().alpha)).toEqual({ ok: false, message: 'Cell "alpha" is not a sweep.' })
  })
})

describe('sweepMap', () => {
  it('sweepMap gives z rows per parameter value and columns along x', () => {
    const r = sweepMap(results().thick, { output: 'A1', xValues: E, xUnit: 'eV' })
    if (!r.ok) throw new Error(r.message)
    expect(r.value.y).toEqual([100, 200, 300])
    expect(r.value.x).toEqual(E)
    expect(r.value.z).toHaveLength(3)
    expect(r.value.z[2]).toHaveLength(E.length)
    expect(r.value.z[2][5]).toBe(0.3)
  })
  it('sweepMap refuses a scalar output with a sentence', () => {
    const r = sweepMap(results().thick, { output: 'Jsc' })
    expect(!r.ok && r.message).toBe('Sweep output "Jsc" is one number per parameter value, so it is drawn as a curve, not a map.')
  })
})
