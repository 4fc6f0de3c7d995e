/** compareSheets lists exactly the changes of crafted pairs of sheets: parameters, formulas, structure, results. */
import { describe, expect, it } from 'vitest'
import { evaluateSheet } from '../../../shared/engine/index'
import { compareSheets, wordDiff } from '../../../shared/snapshot/compare'
import type { SheetFile } from '../../../shared/schema/sheet'

type Cells = SheetFile['cells']
function side(cells: Cells) {
  const file = { format: 'penumbra.sheet', version: 1, title: 'pair', cells } as SheetFile
  return { cells: cells as never, results: evaluateSheet(file) }
}

const BASE: Cells = [
  { id: 'n1', kind: 'note', text: 'Edge model.' },
  { id: 'p-Eg', kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
  { id: 'p-d', kind: 'parameter', name: 'd', value: 850, unit: 'nm' },
  { id: 'f-E', kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 601)', unit: 'eV' },
  { id: 'f-alpha', kind: 'formula', name: 'alpha', source: 'alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 22*meV)', unit: '1/cm' },
  { id: 'f-lam', kind: 'formula', name: 'lam', source: 'photon_wavelength(Eg)', unit: 'nm' },
  { id: 'f-old', kind: 'formula', name: 'old', source: 'd*2', unit: 'nm' },
  { id: 'fit', kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 1.9, unit: 'eV' },
]

describe('compareSheets(a, b)', () => {
  it('lists nothing for the same sheet', () => {
    const a = side(BASE)
    expect(compareSheets(a, side(BASE))).toEqual({ parameters: [], formulas: [], settings: [], added: [], removed: [], renamed: [], moved: [], results: [] })
  })

  it('lists exactly the changed parameters, formulas, settings, added, removed, renamed and moved cells', () => {
    const cells = structuredClone(BASE) as Record<string, unknown>[]
    const byId = (id: string) => cells.find((c) => c.id === id)!
    byId('p-Eg').value = 1.52
    Object.assign(byId('p-d'), { value: 0.9, unit: 'um' })
    byId('f-alpha').source = 'alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 25*meV)'
    byId('f-lam').name = 'lambda_g'
    byId('fit').from = 1.65
    const without = cells.filter((c) => c.id !== 'f-old')
    const note = without.shift()!
    const b = [...without, note, { id: 'f-new', kind: 'formula', name: 'depth', source: '1/alpha', unit: 'um' }]
    const diff = compareSheets(side(BASE), side(b as Cells))
    expect(diff.parameters).toEqual([
      { name: 'Eg', before: 1.48, after: 1.52, unit: 'eV' },
      { name: 'd', before: 850, after: 0.9, unit: 'um', unitBefore: 'nm' },
    ])
    expect(diff.formulas).toHaveLength(1)
    expect(diff.formulas[0]).toMatchObject({ name: 'alpha', before: 'alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 22*meV)', after: 'alpha_edge(E, Eg, 4e9*eV/cm^2, 0.5, 25*meV)' })
    expect(diff.formulas[0].diff.filter((p) => p.added || p.removed)).toEqual([
      { value: '22', removed: true },
      { value: '25', added: true },
    ])
    expect(diff.settings).toEqual([{ name: 'edge', kind: 'fit', fields: ['from'] }])
    expect(diff.added).toEqual(['depth'])
    expect(diff.removed).toEqual(['old'])
    expect(diff.renamed).toEqual([{ from: 'lam', to: 'lambda_g' }])
    expect(diff.moved).toEqual([{ name: 'note n1', from: 0, to: 6 }])
    // results: Eg (scalar), d, alpha (array), lambda_g (scalar), edge (fit); E did not move
    expect(diff.results.map((r) => r.name).sort()).toEqual(['Eg', 'alpha', 'd', 'edge', 'lambda_g'])
    const eg = diff.results.find((r) => r.name === 'Eg')!
    expect(eg.change).toBeCloseTo((1.52 - 1.48) / 1.48, 12)
    expect(eg.note).toBe('1.48 eV → 1.52 eV (+2.7 %)')
    const alpha = diff.results.find((r) => r.name === 'alpha')!
    expect(alpha.index).toBeGreaterThanOrEqual(0)
    expect(alpha.note).toMatch(/^largest change [+−-]?[\d.e+-]+ % at element \d+/)
    const edge = diff.results.find((r) => r.name === 'edge')!
    expect(edge.fit!.find((f) => f.key === 'Eg')).toMatchObject({ flagged: true })
    expect(edge.flagged).toBe(true)
    expect(edge.note).toMatch(/^Eg [\d.]+ ± [\d.e-]+ → [\d.]+ ± [\d.e-]+ \(beyond the combined uncertainty\)/)
  })

  it('does not flag a fit whose value moved by less than the combined uncertainty', () => {
    const fitOf = (eg: number, err: number) => ({ cells: [], results: { title: 't', cells: [{ index: 0, id: 'f', name: 'edge', kind: 'fit', status: 'ok' as const, value: { Eg: eg, Eg_err: err, r2: 0.99 } }] } })
    const diff = compareSheets(fitOf(1.5, 0.003), fitOf(1.504, 0.003))
    // |Δ| = 0.004 < √(0.003² + 0.003²) ≈ 0.00424
    expect(diff.results[0].fit).toEqual([{ key: 'Eg', before: 1.5, beforeErr: 0.003, after: 1.504, afterErr: 0.003, flagged: false }])
    expect(diff.results[0].flagged).toBe(false)
  })

  it('reports a status change as a note without a number', () => {
    const broken = structuredClone(BASE) as Record<string, unknown>[]
    broken.find((c) => c.id === 'f-lam')!.source = 'nope(1)'
    const diff = compareSheets(side(BASE), side(broken as Cells))
    const lam = diff.results.find((r) => r.name === 'lam')!
    expect(lam.change).toBeNull()
    expect(lam.note).toMatch(/^ok → error \(/)
  })
})

describe('wordDiff(before, after)', () => {
  it('splits on words, keeping what did not change', () => {
    expect(wordDiff('a * b + c', 'a * d + c')).toEqual([{ value: 'a * ' }, { value: 'b', removed: true }, { value: 'd', added: true }, { value: ' + c' }])
  })
})
