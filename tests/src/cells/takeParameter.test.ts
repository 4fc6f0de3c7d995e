import { describe, expect, it } from 'vitest'
import { parameterFromFit, takeableOutputs } from '../../../src/components/cells/takeParameter'
import type { FitCell, ParameterCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'

const tauc: FitCell = { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.55, to: 1.9, unit: 'eV' }
const result: CellResult = {
  index: 3, name: 'edge', kind: 'fit', status: 'ok', unit: 'eV', warnings: [],
  value: { Eg: 1.4812, Eg_err: 0.0021, B: 6.7e-6, B_err: 1e-8, r2: 0.9994, n: 36 },
}

describe('takeableOutputs(cell, result, unitOf)', () => {
  it('takeableOutputs offers a Tauc fit\'s Eg in the fit unit, not its slope, r² or point count', () => {
    expect(takeableOutputs(tauc, result, () => undefined)).toEqual([{ key: 'Eg', value: 1.4812, err: 0.0021, unit: 'eV' }])
  })
  it('takeableOutputs gives an Urbach α0 in 1/cm (the result holds 1/m)', () => {
    const urbach: FitCell = { ...tauc, method: 'urbach', unit: 'meV' }
    const out = takeableOutputs(urbach, { ...result, unit: 'meV', value: { Eu: 22, Eu_err: 0.4, alpha0: 1e6, E0: 1480, r2: 0.99, n: 20 } }, () => undefined)
    expect(out.find((o) => o.key === 'alpha0')).toEqual({ key: 'alpha0', value: 1e4, unit: '1/cm' })
    expect(out.find((o) => o.key === 'Eu')?.unit).toBe('meV')
  })
  it('takeableOutputs offers nothing for a failed fit', () => {
    expect(takeableOutputs(tauc, { ...result, status: 'error', error: 'x' }, () => undefined)).toEqual([])
  })
})

describe('parameterFromFit(fit, output, target, cells)', () => {
  const out = { key: 'Eg', value: 1.4812, err: 0.0021, unit: 'eV' }
  it('parameterFromFit makes a new parameter named after the value and the fit, saying where it came from', () => {
    const step = parameterFromFit(tauc, out, undefined, [{ id: 'a', kind: 'parameter', name: 'Eg_edge', value: 1 }])
    if (!step.ok || !step.cell) throw new Error('expected a new cell')
    expect(step.cell).toMatchObject({ kind: 'parameter', name: 'Eg_edge_2', value: 1.4812, unit: 'eV' })
    expect(step.cell.description).toBe('Eg = 1.4812 ± 0.0021 eV from the fit edge, window 1.55–1.9')
  })
  it('parameterFromFit converts into an existing parameter\'s unit (1.4812 eV = 1481.2 meV)', () => {
    const target: ParameterCell = { kind: 'parameter', name: 'Eg0', value: 1500, unit: 'meV' }
    const step = parameterFromFit(tauc, out, target, [])
    if (!step.ok || !step.fields) throw new Error('expected fields')
    expect(step.fields.value as number).toBeCloseTo(1481.2, 9)
  })
  it('parameterFromFit refuses to write an energy into a length', () => {
    const step = parameterFromFit(tauc, out, { kind: 'parameter', name: 'd', value: 500, unit: 'nm' }, [])
    expect(step.ok).toBe(false)
    if (!step.ok) expect(step.message).toMatch(/^Eg is energy eV but d is length nm; choose a parameter of the same kind/)
  })
})
