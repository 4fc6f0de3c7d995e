import { describe, expect, it } from 'vitest'
import { SheetEngine } from '../../../shared/engine/index'
import type { SheetCell } from '../../../shared/schema/sheet'

/**
 * The worker hands the engine cells straight from the live document, where a cell may be half edited or written by
 * an older client. Such a cell is an error in the sheet file's own words; nothing throws and the rest evaluates.
 */
const loose = (cells: unknown[]): SheetCell[] => cells as SheetCell[]

function load(cells: unknown[]): Map<string, { status: string; error?: string; value?: unknown; warnings?: string[] }> {
  const res = new SheetEngine().load(loose(cells), 'loose cells')
  return new Map(res.cells.map((c) => [c.id ?? '', c]))
}

describe('SheetEngine with cells that do not match the sheet-file schema', () => {
  it('load gives each malformed cell an error naming the field, and the valid cells still evaluate', () => {
    const r = load([
      { id: 'a', kind: 'formula', name: 'a' },
      { id: 'b', kind: 'formula', name: 'b', source: 42 },
      { id: 'c', kind: 'parameter', name: 'c', value: 'x' },
      { id: 'd', kind: 'sweep', name: 'd', parameter: 'p', from: 1, to: 2, steps: 2.5, outputs: ['q'] },
      { id: 'e', kind: 'fit', name: 'e', method: 'model', x: 'q', y: 'q', model: 'q', parameters: 'p' },
      { id: 'p', kind: 'parameter', name: 'p', value: 2, unit: 'nm' },
      { id: 'q', kind: 'formula', name: 'q', source: 'p * 3', unit: 'nm' },
    ])
    expect(r.get('a')).toMatchObject({ status: 'error', error: 'invalid cell: source: required' })
    expect(r.get('b')).toMatchObject({ status: 'error', error: 'invalid cell: source: must be a string, not a number' })
    expect(r.get('c')).toMatchObject({ status: 'error', error: 'invalid cell: value: must be a number, not a string' })
    expect(r.get('d')).toMatchObject({ status: 'error', error: 'invalid cell: steps: must be a whole number' })
    expect(r.get('e')?.error).toMatch(/^invalid cell: parameters: must be an array/)
    expect(r.get('q')).toMatchObject({ status: 'ok', value: 6 })
  })

  it('load refuses a spectrum whose columns are not numbers, entry by entry, and blocks its readers', () => {
    const r = load([
      { id: 's', kind: 'spectrum', name: 's', columns: { x: { unit: 'nm', values: [1, 'a', null] } } },
      { id: 't', kind: 'spectrum', name: 't', columns: { x: { unit: 'nm' } } },
      { id: 'u', kind: 'formula', name: 'u', source: 's.x' },
    ])
    expect(r.get('s')).toMatchObject({ status: 'error', error: 'column x: entry 1 is not a number ("a")' })
    expect(r.get('t')).toMatchObject({ status: 'error', error: 'invalid cell: columns.x.values: required (an array of numbers)' })
    expect(r.get('u')).toMatchObject({ status: 'blocked', error: 'blocked: input s failed' })
  })

  it('load gives a cell of an unknown kind an error listing the kinds', () => {
    expect(load([{ id: 'w', kind: 'chart', name: 'w' }]).get('w')).toMatchObject({
      status: 'error',
      error: 'unknown cell kind "chart"; expected one of parameter, formula, spectrum, fit, sweep, figure, note, stack',
    })
  })

  it('update and insert with a malformed cell do not throw, and a fixed cell recovers', () => {
    const engine = new SheetEngine()
    engine.load(loose([{ id: 'p', kind: 'parameter', name: 'p', value: 1 }, { id: 'q', kind: 'formula', name: 'q', source: 'p + 1' }]))
    expect(() => engine.update('q', loose([{ id: 'q', kind: 'formula', name: 'q' }])[0])).not.toThrow()
    expect(engine.resultOf('q')).toMatchObject({ status: 'error', error: 'invalid cell: source: required' })
    expect(engine.insert(null as unknown as SheetCell, 0)).toEqual([])
    engine.update('q', { id: 'q', kind: 'formula', name: 'q', source: 'p + 2' })
    expect(engine.resultOf('q')).toMatchObject({ status: 'ok', value: 3 })
  })

  it('a cell named like a member of the JavaScript object model is warned that formulas cannot read it', () => {
    const r = load([{ id: 'k', kind: 'parameter', name: 'constructor', value: 1 }])
    expect(r.get('k')?.warnings).toContain('the name constructor is reserved: formulas cannot refer to it; choose another name')
  })
})
