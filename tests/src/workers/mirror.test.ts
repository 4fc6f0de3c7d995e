import { describe, expect, it } from 'vitest'
import seedrandom from 'seedrandom'
import { EngineMirror, type IncrementalEngine } from '../../../src/workers/mirror'
import type { SheetCell } from '../../../shared/schema/sheet'

/** An engine that only keeps the order of its cells and logs every call, to check what the mirror asks of it. */
class RecordingEngine implements IncrementalEngine {
  cells: SheetCell[] = []
  calls: string[] = []
  update(id: string, cell: SheetCell | null): string[] {
    this.calls.push(`update ${id}${cell ? '' : ' (remove)'}`)
    const i = this.cells.findIndex((c) => c.id === id)
    if (i >= 0) {
      if (cell) this.cells[i] = cell
      else this.cells.splice(i, 1)
    }
    return cell ? [id] : []
  }
  insert(cell: SheetCell, index: number): string[] {
    this.calls.push(`insert ${cell.id}@${index}`)
    this.cells.splice(index, 0, cell)
    return [cell.id]
  }
  move(id: string, index: number): void {
    this.calls.push(`move ${id}@${index}`)
    const i = this.cells.findIndex((c) => c.id === id)
    const [c] = this.cells.splice(i, 1)
    this.cells.splice(index, 0, c)
  }
}

const param = (id: string, value = 1): SheetCell => ({ id, kind: 'parameter', name: id, value })

function setup(ids: string[]) {
  const engine = new RecordingEngine()
  const cells = ids.map((id) => param(id))
  engine.cells = cells.slice()
  const mirror = new EngineMirror(engine)
  mirror.reset(cells)
  return { engine, mirror }
}

describe('EngineMirror.apply', () => {
  it('apply(order, [edited]) updates only the edited cell and reports no change of order', () => {
    const { engine, mirror } = setup(['a', 'b', 'c'])
    const out = mirror.apply(['a', 'b', 'c'], [param('b', 2)])
    expect(engine.calls).toEqual(['update b'])
    expect([...out.recomputed]).toEqual(['b'])
    expect(out.structural).toBe(false)
  })

  it('apply(order, [unchanged]) makes no engine call when the cell text is the same', () => {
    const { engine, mirror } = setup(['a', 'b'])
    mirror.apply(['a', 'b'], [param('a', 1)])
    expect(engine.calls).toEqual([])
  })

  it('apply(order without b, []) removes b', () => {
    const { engine, mirror } = setup(['a', 'b', 'c'])
    const out = mirror.apply(['a', 'c'], [])
    expect(engine.calls).toEqual(['update b (remove)'])
    expect(out.structural).toBe(true)
    expect(engine.cells.map((c) => c.id)).toEqual(['a', 'c'])
  })

  it('apply(order with x in the middle, [x]) inserts x at its place', () => {
    const { engine, mirror } = setup(['a', 'b'])
    mirror.apply(['a', 'x', 'b'], [param('x')])
    expect(engine.calls).toEqual(['insert x@1'])
    expect(engine.cells.map((c) => c.id)).toEqual(['a', 'x', 'b'])
  })

  it('apply(order naming a cell it was not sent) leaves that cell for the next batch', () => {
    const { engine, mirror } = setup(['a'])
    mirror.apply(['a', 'y'], [])
    expect(engine.cells.map((c) => c.id)).toEqual(['a'])
    mirror.apply(['a', 'y'], [param('y')])
    expect(engine.cells.map((c) => c.id)).toEqual(['a', 'y'])
  })

  it('apply(any permutation with removals and insertions) leaves the engine in exactly the new order', () => {
    const rng = seedrandom('penumbra-mirror')
    for (let trial = 0; trial < 200; trial++) {
      const start = Array.from({ length: 1 + Math.floor(rng() * 8) }, (_, i) => `c${i}`)
      const { engine, mirror } = setup(start)
      const kept = start.filter(() => rng() > 0.25)
      const added = Array.from({ length: Math.floor(rng() * 4) }, (_, i) => `n${trial}_${i}`)
      const next = [...kept, ...added]
      for (let i = next.length - 1; i > 0; i--) {
        const j = Math.floor(rng() * (i + 1))
        ;[next[i], next[j]] = [next[j], next[i]]
      }
      mirror.apply(next, added.map((id) => param(id)))
      expect(engine.cells.map((c) => c.id)).toEqual(next)
      expect(mirror.order).toEqual(next)
    }
  })
})
