import { describe, expect, it } from 'vitest'
import { SheetEngine } from '../../../shared/engine/index'
import type { SheetCell } from '../../../shared/schema/sheet'
import { pick, run, withIds } from './helpers'

function engineWith(cells: unknown[]): { engine: SheetEngine; cells: SheetCell[]; id: (name: string) => string } {
  const all = withIds(cells)
  const engine = new SheetEngine()
  engine.load(all, 'graph')
  const id = (name: string): string => all.find((c) => c.name === name)!.id
  return { engine, cells: all, id }
}

const named = (engine: SheetEngine, ids: string[]): (string | undefined)[] => ids.map((i) => engine.resultOf(i)?.name)

describe('dependency graph: order, cycles, unknown names, blocked cells', () => {
  it('cells evaluate in dependency order whatever their order in the sheet', () => {
    const res = run([
      { kind: 'formula', name: 'c', source: 'b * 2' },
      { kind: 'formula', name: 'b', source: 'a + 1' },
      { kind: 'parameter', name: 'a', value: 1 },
    ])
    expect(pick(res, 'c').value).toBe(4)
    expect(res.cells.map((c) => c.index)).toEqual([0, 1, 2])
  })

  it('a cycle is an error on each of its cells naming the cycle; cells reading it are blocked; the rest works', () => {
    const res = run([
      { kind: 'formula', name: 'a', source: 'b + 1' },
      { kind: 'formula', name: 'b', source: 'a * 2' },
      { kind: 'formula', name: 'c', source: 'a + 1' },
      { kind: 'parameter', name: 'd', value: 5 },
      { kind: 'formula', name: 'e', source: 'd * 2' },
    ])
    expect(pick(res, 'a')).toMatchObject({ status: 'error', error: 'circular reference: a uses b, which uses a; remove one of the references, or make one of these cells a parameter cell' })
    expect(pick(res, 'b')).toMatchObject({ status: 'error', error: 'circular reference: b uses a, which uses b; remove one of the references, or make one of these cells a parameter cell' })
    expect(pick(res, 'c')).toMatchObject({ status: 'blocked', error: 'blocked: input a failed' })
    expect(pick(res, 'e')).toMatchObject({ status: 'ok', value: 10 })
  })

  it('a cell reading itself is a cycle of one', () => {
    expect(pick(run([{ kind: 'formula', name: 'x', source: 'x + 1' }]), 'x').error).toBe('circular reference: x uses its own value; make the starting value a parameter cell')
  })

  it('a longer cycle names every cell along it', () => {
    const res = run([
      { kind: 'formula', name: 'p', source: 'q' },
      { kind: 'formula', name: 'q', source: 'r' },
      { kind: 'formula', name: 'r', source: 'p' },
    ])
    expect(pick(res, 'q').error).toBe('circular reference: q uses r, which uses p, which uses q; remove one of the references, or make one of these cells a parameter cell')
  })

  it('dependents of a failed cell are blocked, each naming its own failed input', () => {
    const res = run([
      { kind: 'formula', name: 'u', source: '1 +' },
      { kind: 'formula', name: 'v', source: 'u + 1' },
      { kind: 'formula', name: 'w', source: 'v + 1' },
      { kind: 'formula', name: 'z', source: '3' },
    ])
    expect(pick(res, 'u').status).toBe('error')
    expect(pick(res, 'v')).toMatchObject({ status: 'blocked', error: 'blocked: input u failed' })
    expect(pick(res, 'w')).toMatchObject({ status: 'blocked', error: 'blocked: input v failed' })
    expect(pick(res, 'z').value).toBe(3)
  })

  it('a formula reading a sweep or a note cell is an error saying what it can read', () => {
    const res = run([
      { kind: 'parameter', name: 'd', value: 1 },
      { kind: 'formula', name: 'y', source: 'd * 2' },
      { kind: 'sweep', name: 'sw', parameter: 'd', from: 1, to: 2, steps: 2, outputs: ['y'] },
      { kind: 'formula', name: 'bad', source: 'sw + 1' },
    ])
    expect(pick(res, 'bad').error).toBe('the input sw is a sweep cell, which has no value to compute with; formulas and fits can use parameters, formulas, spectra, fits and stacks')
  })
})

describe('SheetEngine.update', () => {
  const base = [
    { kind: 'parameter', name: 'a', value: 1, unit: 'nm' },
    { kind: 'parameter', name: 'k', value: 3 },
    { kind: 'formula', name: 'b', source: 'a * 2', unit: 'nm' },
    { kind: 'formula', name: 'c', source: 'b + 1*nm', unit: 'nm' },
    { kind: 'formula', name: 'other', source: 'k * 2' },
  ]

  it('update(cellId, cell) recomputes only the edited cell and its dependents, in order, and returns their ids', () => {
    const { engine, cells, id } = engineWith(base)
    const ids = engine.update(id('a'), { ...cells[0], value: 5 } as SheetCell)
    expect(named(engine, ids)).toEqual(['a', 'b', 'c'])
    expect(engine.resultOf(id('c'))?.value).toBe(11)
    expect(engine.resultOf(id('other'))?.value).toBe(6)
  })

  it('update touches only the edited branch of a sheet of independent branches, and equals a full re-evaluation', () => {
    // three branches a → a2 → a3, b → b2 → b3, c → c2, joined only by j = a3 + b3; a fit and a sweep hang off branch b
    const sheet = [
      { id: 'a', kind: 'parameter', name: 'a', value: 1, unit: 'nm' },
      { id: 'b', kind: 'parameter', name: 'b', value: 1.5, unit: 'eV' },
      { id: 'c', kind: 'parameter', name: 'c', value: 3 },
      { id: 'a2', kind: 'formula', name: 'a2', source: 'grid(a, 10*a, 5)', unit: 'nm' },
      { id: 'b2', kind: 'formula', name: 'b2', source: 'grid(1*eV, 3*eV, 201)', unit: 'eV' },
      { id: 'b3', kind: 'formula', name: 'b3', source: 'alpha_direct(b2, b, 4e9*eV/cm^2)', unit: '1/cm' },
      { id: 'a3', kind: 'formula', name: 'a3', source: 'sum(a2)/nm' },
      { id: 'c2', kind: 'formula', name: 'c2', source: 'c^2' },
      { id: 'j', kind: 'formula', name: 'j', source: 'a3 + max(b3)*cm' },
      { id: 'fit', kind: 'fit', name: 'fit', method: 'tauc', x: 'b2', y: 'b3', r: 0.5, from: 2.2, to: 2.8 },
      { id: 'sw', kind: 'sweep', name: 'sw', parameter: 'c', from: 1, to: 2, steps: 3, outputs: ['c2'] },
    ] as SheetCell[]
    const engine = new SheetEngine()
    engine.load(sheet, 'branches')
    const current = sheet.map((c) => ({ ...c })) as SheetCell[]
    const edit = (cellId: string, change: Record<string, unknown>): string[] => {
      const i = current.findIndex((c) => c.id === cellId)
      current[i] = { ...current[i], ...change } as SheetCell
      return engine.update(cellId, current[i])
    }
    const full = (): unknown => new SheetEngine().load(current, 'branches').cells
    expect(edit('c', { value: 4 })).toEqual(['c', 'c2'])
    expect(engine.results().cells).toEqual(full())
    expect(edit('a', { value: 2 })).toEqual(['a', 'a2', 'a3', 'j'])
    expect(engine.results().cells).toEqual(full())
    expect(edit('b', { value: 1.6 })).toEqual(['b', 'b3', 'j', 'fit'])
    expect(engine.results().cells).toEqual(full())
    expect(edit('b2', { source: 'grid(1.1*eV, 3*eV, 201)' })).toEqual(['b2', 'b3', 'j', 'fit'])
    expect(engine.results().cells).toEqual(full())
    expect(edit('c2', { source: 'c^3' })).toEqual(['c2', 'sw'])
    expect(engine.results().cells).toEqual(full())
    expect(edit('a3', { source: 'sum(a2)/nm + c' }).sort()).toEqual(['a3', 'j'])
    expect(engine.results().cells).toEqual(full())
  })

  it('update of a formula that starts reading another cell rewires the graph', () => {
    const { engine, cells, id } = engineWith(base)
    engine.update(id('other'), { ...cells[4], source: 'k * c / nm' } as SheetCell)
    expect(engine.resultOf(id('other'))?.value).toBeCloseTo(9, 12)
    const ids = engine.update(id('a'), { ...cells[0], value: 2 } as SheetCell)
    expect(named(engine, ids)).toEqual(['a', 'b', 'c', 'other'])
    expect(engine.resultOf(id('other'))?.value).toBeCloseTo(15, 12)
  })

  it('renaming a cell turns its readers into unknown-name errors, and naming it back heals them', () => {
    const { engine, cells, id } = engineWith(base)
    engine.update(id('a'), { ...cells[0], name: 'a2' } as SheetCell)
    expect(engine.resultOf(id('b'))).toMatchObject({ status: 'error', error: 'unknown name: a; check the spelling, or add a cell named a' })
    expect(engine.resultOf(id('c'))?.status).toBe('blocked')
    engine.update(id('a'), { ...cells[0] } as SheetCell)
    expect(engine.resultOf(id('c'))).toMatchObject({ status: 'ok', value: 3 })
  })

  it('update(cellId, null) removes a cell; its readers report the missing name', () => {
    const { engine, id } = engineWith(base)
    const ids = engine.update(id('b'), null)
    expect(named(engine, ids)).toEqual(['c'])
    expect(engine.resultOf(id('c'))?.error).toBe('unknown name: b; check the spelling, or add a cell named b')
    expect(engine.results().cells).toHaveLength(4)
  })

  it('a broken edit is an error value on the cell, never an exception, and fixing it recovers the sheet', () => {
    const { engine, cells, id } = engineWith(base)
    expect(() => engine.update(id('b'), { ...cells[2], source: 'a * (' } as SheetCell)).not.toThrow()
    expect(engine.resultOf(id('b'))?.status).toBe('error')
    expect(engine.resultOf(id('c'))?.error).toBe('blocked: input b failed')
    engine.update(id('b'), cells[2])
    expect(engine.resultOf(id('c'))?.value).toBe(3)
  })

  it('a second cell taking a name already used is an error on the later cell', () => {
    const { engine, id } = engineWith(base)
    engine.update('new', { id: 'new', kind: 'parameter', name: 'k', value: 9 } as SheetCell)
    expect(engine.resultOf('new')?.error).toBe('the name k is already used by cell 2 (counting from the top of the sheet); give this cell another name')
    expect(engine.resultOf(id('other'))?.value).toBe(6)
  })

  it('insert(cell, index) places the cell and resolves names that were unknown', () => {
    const { engine, id } = engineWith([{ kind: 'formula', name: 'y', source: 'x * 2' }])
    expect(engine.resultOf(id('y'))?.error).toBe('unknown name: x; check the spelling, or add a cell named x')
    const ids = engine.insert({ id: 'x1', kind: 'parameter', name: 'x', value: 4 } as SheetCell, 0)
    expect(ids).toEqual(['x1', id('y')])
    expect(engine.results().cells.map((c) => c.name)).toEqual(['x', 'y'])
    expect(engine.resultOf(id('y'))?.value).toBe(8)
  })

  it('move(cellId, index) reorders the results and decides which of two same-named cells holds the name', () => {
    const { engine, id } = engineWith([
      { id: 'one', kind: 'parameter', name: 'p', value: 1 },
      { kind: 'formula', name: 'y', source: 'p * 10' },
    ])
    engine.insert({ id: 'two', kind: 'parameter', name: 'p', value: 2 } as SheetCell, 2)
    expect(engine.resultOf(id('y'))?.value).toBe(10)
    engine.move('two', 0)
    expect(engine.results().cells.map((c) => c.id)).toEqual(['two', 'one', id('y')])
    expect(engine.resultOf(id('y'))?.value).toBe(20)
    expect(engine.resultOf('one')?.error).toBe('the name p is already used by cell 1 (counting from the top of the sheet); give this cell another name')
    engine.move(id('y'), 0)
    expect(engine.resultOf('one')?.error).toBe('the name p is already used by cell 2 (counting from the top of the sheet); give this cell another name')
  })

  it('editing the value of a swept parameter leaves the sweep alone; editing another input re-runs it', () => {
    const { engine, cells, id } = engineWith([
      { kind: 'parameter', name: 'd', value: 100, unit: 'nm' },
      { kind: 'parameter', name: 'alpha', value: 1e4, unit: '1/cm' },
      { kind: 'formula', name: 'A', source: 'absorbed_fraction(alpha, d)', unit: '%' },
      { kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 1000, steps: 10, unit: 'nm', outputs: ['A'] },
    ])
    const before = JSON.stringify(engine.resultOf(id('thick'))?.value)
    expect(named(engine, engine.update(id('d'), { ...cells[0], value: 500 } as SheetCell))).toEqual(['d', 'A'])
    expect(JSON.stringify(engine.resultOf(id('thick'))?.value)).toBe(before)
    expect(named(engine, engine.update(id('alpha'), { ...cells[1], value: 2e4 } as SheetCell))).toEqual(['alpha', 'A', 'thick'])
    expect(JSON.stringify(engine.resultOf(id('thick'))?.value)).not.toBe(before)
  })

  it('results() is JSON-ready: arrays are plain number arrays', () => {
    const { engine } = engineWith([{ kind: 'formula', name: 'g', source: 'grid(0, 1, 3)' }])
    const v = engine.results().cells[0].value
    expect(Array.isArray(v)).toBe(true)
    expect(JSON.parse(JSON.stringify(engine.results()))).toEqual(engine.results())
  })
})
