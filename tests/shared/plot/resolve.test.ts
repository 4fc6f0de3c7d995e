import { describe, it, expect } from 'vitest'
import { drawableRefs, resolveRef } from '../../../shared/plot/resolve'
import { E, results } from './fixtures'

describe('resolveRef', () => {
  it('resolveRef("alpha") gives a formula cell\'s array in its display unit', () => {
    const r = resolveRef('alpha', results())
    expect(r.ok).toBe(true)
    if (r.ok && r.value.kind === 'array') {
      expect(r.value.unit).toBe('1/cm')
      expect(r.value.values).toHaveLength(E.length)
      expect(r.value.cell).toBe('alpha')
    } else throw new Error('expected an array')
  })
  it('resolveRef("Eg") gives a parameter as a scalar with its unit', () => {
    expect(resolveRef('Eg', results())).toEqual({ ok: true, value: { kind: 'scalar', ref: 'Eg', cell: 'Eg', value: 1.48, unit: 'eV' } })
  })
  it('resolveRef("filmB.T") gives a spectrum column with the column\'s unit, nulls as NaN', () => {
    const r = resolveRef('filmB.wavelength', results())
    if (!r.ok || r.value.kind !== 'array') throw new Error('expected an array')
    expect(r.value.unit).toBe('nm')
    expect(r.value.values.slice(0, 3)).toEqual([900, 800, 700])
    expect(r.value.values[3]).toBeNaN()
    const t = resolveRef('filmB.T', results())
    expect(t.ok && t.value.unit).toBe('%')
  })
  it('resolveRef("edge.Eg") gives the fitted energy in the fit\'s unit with its standard error', () => {
    expect(resolveRef('edge.Eg', results())).toEqual({
      ok: true,
      value: { kind: 'scalar', ref: 'edge.Eg', cell: 'edge', value: 1.4812, error: 0.0021, unit: 'eV' },
    })
  })
  it('resolveRef("edge.B") gives a non-energy fit output as SI with no display unit', () => {
    const r = resolveRef('edge.B', results())
    expect(r.ok && r.value.unit).toBe('')
  })
  it('resolveRef("edge") on a fit means its band gap', () => {
    const r = resolveRef('edge', results())
    expect(r.ok && r.value.kind === 'scalar' && r.value.ref).toBe('edge.Eg')
  })
  it('resolveRef names an unknown cell', () => {
    expect(resolveRef('alpah', results())).toEqual({ ok: false, message: 'There is no cell named "alpah" in this sheet.' })
  })
  it('resolveRef names a cell in error and passes its message on', () => {
    expect(resolveRef('broken', results())).toEqual({ ok: false, message: 'Cell "broken" has an error: unknown function "alpah_edge".' })
  })
  it('resolveRef names a blocked cell and the input it waits on', () => {
    expect(resolveRef('waiting', results())).toEqual({
      ok: false,
      message: 'Cell "waiting" is blocked (blocked: input broken failed); fix that input first.',
    })
  })
  it('resolveRef lists a spectrum\'s columns when the column is wrong or missing', () => {
    const r = resolveRef('filmB.R', results())
    expect(r).toEqual({ ok: false, message: 'Spectrum "filmB" has no column "R"; its columns are wavelength, T.' })
    const s = resolveRef('filmB', results())
    expect(!s.ok && s.message).toContain('filmB.wavelength, filmB.T')
  })
  it('resolveRef lists a fit\'s values when the key is unknown', () => {
    const r = resolveRef('edge.Eu', results())
    expect(!r.ok && r.message).toBe('Fit "edge" has no value "Eu"; it has Eg, Eg_err, B, r2.')
  })
  it('resolveRef points a sweep to the figure\'s sweep setting', () => {
    const r = resolveRef('thick', results())
    expect(!r.ok && r.message).toContain("Choose it as the figure's sweep")
  })
  it('resolveRef refuses members of plain cells and cells with nothing to draw', () => {
    expect(resolveRef('alpha.x', results())).toEqual({ ok: false, message: '"alpha" is a formula cell; it has no member "x".' })
    expect(resolveRef('fig0', results()).ok).toBe(false)
    expect(resolveRef('  ', results())).toEqual({ ok: false, message: 'No cell is named here yet.' })
  })
})

describe('drawableRefs', () => {
  it('drawableRefs lists cells, spectrum columns and fit outputs that resolve, skipping failed cells', () => {
    const refs = drawableRefs(results()).map((r) => r.ref)
    expect(refs).toContain('alpha')
    expect(refs).toContain('filmB.T')
    expect(refs).toContain('edge.Eg')
    expect(refs).not.toContain('broken')
    expect(refs).not.toContain('thick')
  })
})
