/**
 * The worker's view of the sheet: the cell order the engine holds and the last text of each cell, so a batch from
 * the page ("this is the order now, these cells changed") becomes the fewest engine calls — removals, insertions at
 * their place, moves, and updates of cells whose content really changed.
 */
import type { SheetCell } from '../../shared/schema/sheet'

/** The part of SheetEngine the mirror drives. */
export interface IncrementalEngine {
  update(cellId: string, cell: SheetCell | null): string[]
  insert(cell: SheetCell, index: number): string[]
  move(cellId: string, index: number): void
}

export class EngineMirror {
  /** Cell ids in the order the engine holds them. */
  order: string[] = []
  /** The JSON text of each cell as the engine last read it, to skip no-op updates. */
  private known = new Map<string, string>()

  constructor(private readonly engine: IncrementalEngine) {}

  /** After a full load of `cells`. */
  reset(cells: readonly SheetCell[]): void {
    this.order = cells.map((c) => c.id)
    this.known = new Map(cells.map((c) => [c.id, JSON.stringify(c)]))
  }

  /** Applies one batch; returns the recomputed ids and whether the order of cells changed. */
  apply(nextOrder: readonly string[], changed: readonly SheetCell[]): { recomputed: Set<string>; structural: boolean } {
    const engine = this.engine
    const recomputed = new Set<string>()
    const add = (ids: string[]) => ids.forEach((id) => recomputed.add(id))
    const byId = new Map(changed.map((c) => [c.id, c]))
    const wanted = new Set(nextOrder)
    let structural = false

    for (const id of this.order) {
      if (wanted.has(id)) continue
      add(engine.update(id, null))
      this.known.delete(id)
      structural = true
    }
    this.order = this.order.filter((id) => wanted.has(id))

    let index = 0
    for (const id of nextOrder) {
      if (!this.known.has(id)) {
        const cell = byId.get(id)
        if (!cell) continue // announced but not sent: the next batch carries it
        add(engine.insert(cell, index))
        recomputed.add(id)
        this.known.set(id, JSON.stringify(cell))
        this.order.splice(index, 0, id)
        structural = true
      } else if (this.order[index] !== id) {
        engine.move(id, index)
        this.order.splice(this.order.indexOf(id), 1)
        this.order.splice(index, 0, id)
        structural = true
      }
      index++
    }

    for (const cell of changed) {
      if (!wanted.has(cell.id) || !this.known.has(cell.id)) continue
      const text = JSON.stringify(cell)
      if (this.known.get(cell.id) === text) continue
      this.known.set(cell.id, text)
      add(engine.update(cell.id, cell))
    }
    return { recomputed, structural }
  }
}
