import { describe, expect, it } from 'vitest'
import { SheetEngine } from '../../../shared/engine/index'
import type { SheetCell } from '../../../shared/schema/sheet'
import { formula, pick, run } from './helpers'
import { MAX_FORMULA_LENGTH } from '../../../shared/engine/limits'

describe('evaluation limits', () => {
  it('an array of more than 1,000,000 elements is an error on that cell only', () => {
    const res = run([
      { kind: 'formula', name: 'big', source: 'grid(0, 1, 1000001)' },
      { kind: 'formula', name: 'fine', source: 'len(grid(0, 1, 1000000))' },
    ])
    expect(pick(res, 'big').status).toBe('error')
    expect(pick(res, 'big').error).toBe('grid: 1,000,001 points exceed the limit of 1,000,000 elements in one array; use fewer points')
    expect(pick(res, 'fine').value).toBe(1000000)
  })

  it('the element limit can be lowered per engine', () => {
    const res = run([{ kind: 'formula', name: 'a', source: 'grid(0, 1, 2000)' }], { maxElements: 1000 })
    expect(pick(res, 'a').error).toBe('grid: 2,000 points exceed the limit of 1,000 elements in one array; use fewer points')
  })

  it('a formula longer than the cap is an error saying the cap', () => {
    const source = Array.from({ length: 1300 }, () => '1').join(' + ')
    expect(source.length).toBeGreaterThan(MAX_FORMULA_LENGTH)
    expect(formula(source).error).toBe(`the formula is ${source.length.toLocaleString('en-US')} characters long; the limit is ${MAX_FORMULA_LENGTH.toLocaleString('en-US')}: split it into several formula cells`)
  })

  it('a formula with too many terms is an error', () => {
    const source = Array.from({ length: 1500 }, () => 'x').join('+')
    expect(formula(source, undefined, [{ kind: 'parameter', name: 'x', value: 1 }]).error).toBe('the formula has more than 2,000 terms: split it into several formula cells')
  })

  it('deeply nested parentheses are an error, not a crash', () => {
    const source = '('.repeat(2400) + '1' + ')'.repeat(2400)
    const r = formula(source)
    expect(r.status).toBe('error')
  })

  it('a sweep whose table would exceed 5,000,000 numbers is an error before it fills memory', () => {
    const res = run([
      { kind: 'parameter', name: 'p', value: 1 },
      { kind: 'formula', name: 'y', source: 'grid(0, 1, 100000) * p' },
      { kind: 'sweep', name: 'sw', parameter: 'p', from: 1, to: 2, steps: 10000, outputs: ['y'] },
    ])
    expect(pick(res, 'sw').error).toBe('the sweep table would hold 1,000,000,000 numbers (10,000 steps × 100,000 per step); the limit is 5,000,000: use fewer steps or shorter arrays')
  })

  it('a cell that would take the whole sheet past its limit of numbers is an error; the cells before it stay', () => {
    const cells = [
      { id: 'a', kind: 'formula', name: 'a', source: 'grid(0, 1, 400)' },
      { id: 'b', kind: 'formula', name: 'b', source: 'grid(0, 1, 400)' },
      { id: 'c', kind: 'formula', name: 'c', source: 'grid(0, 1, 400)' },
      { id: 'd', kind: 'formula', name: 'd', source: 'sum(a)' },
    ] as SheetCell[]
    const engine = new SheetEngine({ maxSheetNumbers: 1000 })
    const res = engine.load(cells)
    expect(res.cells.map((c) => c.status)).toEqual(['ok', 'ok', 'error', 'ok'])
    expect(res.cells[2].error).toBe("with this cell's 400 numbers the sheet would hold 1,200; the limit for one sheet is 1,000: use shorter grids or fewer sweep steps")
    // removing a large cell frees its share for the others
    engine.update('b', null)
    engine.update('c', cells[2])
    expect(engine.resultOf('c')?.status).toBe('ok')
  })

  it('of twelve formulas of a million numbers each, the eleventh and twelfth stop at the default sheet limit of 10,000,000', () => {
    const cells = Array.from({ length: 12 }, (_, i) => ({ kind: 'formula', name: `g${i}`, source: 'grid(0, 1, 1000000)' }))
    const res = run(cells)
    expect(res.cells.filter((c) => c.status === 'ok')).toHaveLength(10)
    expect(res.cells[10].error).toMatch(/the limit for one sheet is 10,000,000/)
  })

  it('a cell that runs past its time budget is stopped with an error; the rest of the sheet still evaluates', () => {
    // without the budget this sweep would run 10,000 steps over a 20,000-element grid: seconds of work
    const res = run(
      [
        { kind: 'parameter', name: 'p', value: 1 },
        { kind: 'formula', name: 'y', source: 'sum(grid(0, 1, 20000) * p)' },
        { kind: 'sweep', name: 's', parameter: 'p', from: 1, to: 2, steps: 10000, outputs: ['y'] },
        { kind: 'formula', name: 'other', source: '2 * p' },
      ],
      { timeBudgetMs: 200 },
    )
    expect(pick(res, 's').status).toBe('error')
    expect(pick(res, 's').error).toBe('evaluation took longer than the 200 ms budget for one cell and was stopped; use shorter grids, fewer sweep steps or fewer free fit parameters')
    expect(pick(res, 'other').value).toBe(2)
  })
})
