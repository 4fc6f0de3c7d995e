import { describe, expect, it } from 'vitest'
import { layerNameProblem, movedLayer, stackFigureCell, stackRows, withNewLayer, withoutLayer } from '../../../src/components/cells/stackEdit'
import { resolveRef } from '../../../shared/plot/resolve'
import type { StackCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'

const cell: StackCell = {
  kind: 'stack', name: 'cell1', wavelength: 'lam', layers: [
    { name: 'coat', thickness: '95*nm', n: '1.38', k: '0' },
    { name: 'absorber', thickness: '300*nm', n: 'n_abs', k: 'k_abs' },
  ],
  substrate: { name: 'glass', n: '1.52', k: '0' },
}
const result: CellResult = {
  index: 3, name: 'cell1', kind: 'stack', status: 'ok', unit: 'nm',
  value: { wavelength: [400, 500, 600], R: [0.1, 0.2, 0.3], T: [0.5, 0.5, 0.5], A: [0.4, 0.3, 0.2], A_coat: [0, 0, 0], A_absorber: [0.4, 0.3, 0.2], A_glass: [0, 0, 0] },
  units: { wavelength: 'nm', R: '1', T: '1', A: '1', A_coat: '1', A_absorber: '1', A_glass: '1' },
}

describe('stack card edits', () => {
  it('withNewLayer appends layer3, skipping names taken by a layer or the substrate', () => {
    expect(withNewLayer(cell).map((l) => l.name)).toEqual(['coat', 'absorber', 'layer3'])
    const taken = { ...cell, substrate: { ...cell.substrate, name: 'layer3' } }
    expect(withNewLayer(taken).at(-1)?.name).toBe('layer4')
  })

  it('movedLayer swaps neighbours and leaves the ends alone; withoutLayer removes one', () => {
    expect(movedLayer(cell.layers, 1, -1).map((l) => l.name)).toEqual(['absorber', 'coat'])
    expect(movedLayer(cell.layers, 0, -1).map((l) => l.name)).toEqual(['coat', 'absorber'])
    expect(withoutLayer(cell.layers, 0).map((l) => l.name)).toEqual(['absorber'])
  })

  it('layerNameProblem refuses a name that is not an identifier or is another layer\'s', () => {
    expect(layerNameProblem(cell, 0, 'top coat')).toMatch(/cannot name a layer/)
    expect(layerNameProblem(cell, 0, 'absorber')).toBe('Another layer is named absorber; each layer needs its own name.')
    expect(layerNameProblem(cell, -1, 'coat')).toBe('Another layer is named coat; each layer needs its own name.')
    expect(layerNameProblem(cell, 0, 'coat')).toBeNull()
    expect(layerNameProblem(cell, 0, 'MgF2')).toBeNull()
  })

  it('stackRows gives each output\'s mean and range over the grid, with what it is', () => {
    const rows = stackRows(cell, result)
    expect(rows.map((r) => r.ref)).toEqual(['cell1.R', 'cell1.T', 'cell1.A', 'cell1.A_coat', 'cell1.A_absorber', 'cell1.A_glass'])
    expect(rows[0]).toMatchObject({ meaning: 'reflectance', min: 0.1, max: 0.3 })
    expect(rows[0].mean).toBeCloseTo(0.2, 15)
    expect(rows[4].meaning).toBe('absorbed in absorber')
  })

  it('the stack figure draws every output against cell1.wavelength, which figures resolve in nm', () => {
    const fig = stackFigureCell(cell, result)
    expect(fig.traces.map((t) => t.y)).toEqual(['cell1.R', 'cell1.T', 'cell1.A', 'cell1.A_coat', 'cell1.A_absorber', 'cell1.A_glass'])
    const x = resolveRef('cell1.wavelength', { cell1: result })
    expect(x.ok && x.value.kind === 'array' && x.value.unit).toBe('nm')
    const r = resolveRef('cell1.R', { cell1: result })
    expect(r.ok && r.value.kind === 'array' && r.value.unit).toBe('')
    const bad = resolveRef('cell1.Q', { cell1: result })
    expect(bad.ok ? '' : bad.message).toBe('Stack "cell1" has no output "Q"; it has wavelength, R, T, A, A_coat, A_absorber, A_glass.')
  })
})
