import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { evaluateSheet } from '../../../shared/engine/index'
import { parseSheetFileText } from '../../../shared/schema/sheet'
import type { EvaluationResult } from '../../../shared/schema/result'
import { pick } from './helpers'

function evaluateExample(file: string): EvaluationResult {
  const r = parseSheetFileText(readFileSync(join(__dirname, '../../../examples', file), 'utf8'))
  if (!r.ok) throw new Error(r.issues.map((i) => `${i.path}: ${i.message}`).join('; '))
  return evaluateSheet(r.value)
}

describe('example sheets', () => {
  for (const file of ['edge-model.penumbra.json', 'thickness-study.penumbra.json', 'design-example.penumbra.json']) {
    it(`evaluateSheet(${file}) gives every cell status ok and no warnings`, () => {
      const res = evaluateExample(file)
      for (const c of res.cells) {
        expect(c.status, `${c.name}: ${c.error}`).toBe('ok')
        expect(c.warnings ?? [], `${c.name}`).toEqual([])
      }
    })
  }

  it('the edge-model demo recovers the band edge its invented spectrum was made with (Eg 1.52 eV, Eu 24 meV)', () => {
    const res = evaluateExample('edge-model.penumbra.json')
    const tauc = pick(res, 'tauc_m').value as Record<string, number>
    expect(Math.abs(tauc.Eg - 1.52)).toBeLessThan(0.01)
    const model = pick(res, 'edge').value as Record<string, number>
    expect(Math.abs(model.Eg - 1.52)).toBeLessThan(0.005)
    expect(Math.abs(model.Eu - 24)).toBeLessThan(1)
  })

  it('evaluateSheet answers the DESIGN §5 example sheet in the shape DESIGN §5 gives', () => {
    const res = evaluateExample('design-example.penumbra.json')
    expect(res.title).toBe('Edge model of film B')
    expect(res.cells.map((c) => [c.index, c.name, c.kind, c.status])).toEqual([
      [0, 'Eg', 'parameter', 'ok'], [1, 'd', 'parameter', 'ok'], [2, 'E', 'formula', 'ok'], [3, 'alpha', 'formula', 'ok'],
      [4, 'A1', 'formula', 'ok'], [5, 'edge', 'fit', 'ok'], [6, 'thick', 'sweep', 'ok'], [7, 'fig1', 'figure', 'ok'],
      [8, undefined, 'note', 'ok'],
    ])
    expect(res.cells[0]).toMatchObject({ value: 1.48, unit: 'eV', dimension: 'energy', warnings: [] })
    const alpha = res.cells[3]
    expect(alpha).toMatchObject({ unit: '1/cm', dimension: '1/length', warnings: [] })
    expect((alpha.value as number[]).length).toBe(601)
    const edge = res.cells[5]
    expect(edge.unit).toBe('eV')
    const fit = edge.value as Record<string, number>
    expect(Object.keys(fit)).toEqual(expect.arrayContaining(['Eg', 'Eg_err', 'B', 'r2']))
    // the edge is Tauc (direct) above the Urbach junction, which lies below the 1.55–1.9 eV window
    expect(Math.abs(fit.Eg - 1.48)).toBeLessThan(1e-6)
    const thick = res.cells[6]
    expect(thick.unit).toBe('nm')
    const table = thick.value as { parameter: number[]; outputs: { A1: number[][] } }
    expect(table.parameter.slice(0, 3)).toEqual([100, 150, 200])
    expect(table.parameter).toHaveLength(59)
    expect(table.outputs.A1).toHaveLength(59)
    expect(table.outputs.A1[0]).toHaveLength(601)
    expect(res.cells[7].value).toBeNull()
    expect(res.cells[8].value).toBeNull()
    for (const c of res.cells) expect(typeof c.id).toBe('string')
  })

  it('the thickness study’s film on glass swings with interference fringes near the edge where the flat-film estimate is smooth, and conserves energy', () => {
    const res = evaluateExample('thickness-study.penumbra.json')
    const lam = pick(res, 'lam').value as number[]
    const { R, T, A_absorber: film, A_glass: glass } = pick(res, 'on_glass').value as Record<string, number[]>
    const flat = pick(res, 'A_flat').value as number[]
    // turning points between 550 and 800 nm, where α·d is of order 1 (the film lets light through to its back face)
    const turns = (a: number[]) => a.filter((_, i) => i > 0 && i < a.length - 1 && lam[i] >= 550 && lam[i] <= 800 && (a[i] - a[i - 1]) * (a[i + 1] - a[i]) < 0).length
    expect(turns(film)).toBeGreaterThanOrEqual(4)
    expect(turns(flat)).toBe(0)
    // R + T + ΣA = 1 at every wavelength (energy conservation, common practice for a lossless ambient)
    for (let i = 0; i < lam.length; i++) expect(Math.abs(R[i] + T[i] + film[i] + glass[i] - 1)).toBeLessThan(1e-9)
    // well above the gap nothing reaches the slide; well below it the film absorbs almost nothing
    expect(glass.every((g) => g < 1e-9)).toBe(true)
    expect(film[lam.length - 1]).toBeLessThan(1e-3)
  })
})
