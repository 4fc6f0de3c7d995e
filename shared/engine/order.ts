/**
 * Recomputation order: the dependency graph of a sheet built from the names its cells read, a topological order for
 * evaluation, the cycles (each member gets an error naming its cycle), names that resolve to nothing, duplicate
 * names, and the sets an edit touches (descendants) or a sweep or model fit re-runs (chains).
 */
import type { PreparedCell } from './cells'
import { builtinName } from './names'

export class Graph {
  /** Cell ids in sheet order. */
  readonly ids: string[]
  /** The cell holding each name (the first one, when a name is used twice). */
  readonly byName = new Map<string, string>()
  /** Cells each cell reads, resolved to ids, in reading order. */
  readonly deps = new Map<string, string[]>()
  readonly dependents = new Map<string, string[]>()
  /** Names a cell reads that no cell, constant or unit defines. */
  readonly unknown = new Map<string, string[]>()
  /** Cells whose name an earlier cell already holds → that earlier cell's id. */
  readonly duplicateOf = new Map<string, string>()
  /** Cells on a cycle → the names along it, starting with the cell itself. */
  readonly cycle = new Map<string, string[]>()
  /** Evaluation order: every cell after the cells it reads (cycles aside). */
  readonly order: string[] = []
  readonly rank = new Map<string, number>()
  private readonly cells = new Map<string, PreparedCell>()

  constructor(prepared: readonly PreparedCell[]) {
    this.ids = prepared.map((p) => p.id)
    for (const p of prepared) {
      this.cells.set(p.id, p)
      if (!p.name) continue
      const first = this.byName.get(p.name)
      if (first === undefined) this.byName.set(p.name, p.id)
      else this.duplicateOf.set(p.id, first)
    }
    for (const p of prepared) {
      const deps: string[] = []
      const unknown: string[] = []
      for (const name of p.reads) {
        const id = this.byName.get(name)
        if (id !== undefined) {
          if (!deps.includes(id)) deps.push(id)
        } else if (p.cellsOnly || !builtinName(name)) unknown.push(name)
      }
      this.deps.set(p.id, deps)
      if (unknown.length) this.unknown.set(p.id, unknown)
      this.dependents.set(p.id, [])
    }
    for (const [id, deps] of this.deps) for (const d of deps) this.dependents.get(d)?.push(id)
    this.findCycles()
    this.sortTopologically()
  }

  nameOf(id: string): string {
    return this.cells.get(id)?.name ?? id
  }

  /** Tarjan's strongly connected components, iteratively; components with a loop are cycles. */
  private findCycles(): void {
    let counter = 0
    const index = new Map<string, number>()
    const low = new Map<string, number>()
    const onStack = new Set<string>()
    const stack: string[] = []
    for (const root of this.ids) {
      if (index.has(root)) continue
      const work: { id: string; next: number }[] = [{ id: root, next: 0 }]
      index.set(root, counter)
      low.set(root, counter++)
      stack.push(root)
      onStack.add(root)
      while (work.length) {
        const top = work[work.length - 1]
        const deps = this.deps.get(top.id) ?? []
        if (top.next < deps.length) {
          const d = deps[top.next++]
          if (!index.has(d)) {
            index.set(d, counter)
            low.set(d, counter++)
            stack.push(d)
            onStack.add(d)
            work.push({ id: d, next: 0 })
          } else if (onStack.has(d)) low.set(top.id, Math.min(low.get(top.id)!, index.get(d)!))
          continue
        }
        work.pop()
        if (work.length) {
          const parent = work[work.length - 1].id
          low.set(parent, Math.min(low.get(parent)!, low.get(top.id)!))
        }
        if (low.get(top.id) === index.get(top.id)) {
          const component: string[] = []
          let x: string
          do {
            x = stack.pop()!
            onStack.delete(x)
            component.push(x)
          } while (x !== top.id)
          const looped = component.length > 1 || (this.deps.get(top.id) ?? []).includes(top.id)
          if (looped) {
            const members = new Set(component)
            for (const id of component) this.cycle.set(id, this.cycleThrough(id, members).map((c) => this.nameOf(c)))
          }
        }
      }
    }
  }

  /** The shortest loop from `start` back to itself inside one component (breadth-first). */
  private cycleThrough(start: string, members: ReadonlySet<string>): string[] {
    const previous = new Map<string, string>()
    const queue = [start]
    while (queue.length) {
      const id = queue.shift()!
      for (const d of this.deps.get(id) ?? []) {
        if (!members.has(d)) continue
        if (d === start) {
          const path = [id]
          while (path[0] !== start) path.unshift(previous.get(path[0])!)
          return path
        }
        if (!previous.has(d)) {
          previous.set(d, id)
          queue.push(d)
        }
      }
    }
    return [start]
  }

  /** Depth-first post-order over the dependencies, visiting cells in sheet order. */
  private sortTopologically(): void {
    const seen = new Set<string>()
    for (const root of this.ids) {
      if (seen.has(root)) continue
      seen.add(root)
      const work: { id: string; next: number }[] = [{ id: root, next: 0 }]
      while (work.length) {
        const top = work[work.length - 1]
        const deps = this.deps.get(top.id) ?? []
        if (top.next < deps.length) {
          const d = deps[top.next++]
          if (!seen.has(d)) {
            seen.add(d)
            work.push({ id: d, next: 0 })
          }
          continue
        }
        work.pop()
        this.rank.set(top.id, this.order.length)
        this.order.push(top.id)
      }
    }
  }

  /**
   * The given cells and everything downstream of them. `stop(id)` cells are neither included nor passed through
   * (a sweep over an edited parameter, say, whose table does not depend on that parameter's current value).
   */
  descendants(from: Iterable<string>, stop?: (id: string) => boolean): Set<string> {
    const out = new Set<string>()
    const queue: string[] = []
    for (const id of from) if (!out.has(id)) {
      out.add(id)
      queue.push(id)
    }
    while (queue.length) {
      const id = queue.pop()!
      for (const d of this.dependents.get(id) ?? []) {
        if (out.has(d) || stop?.(d)) continue
        out.add(d)
        queue.push(d)
      }
    }
    return out
  }

  /** The given cells and everything upstream of them. */
  ancestors(from: Iterable<string>): Set<string> {
    const out = new Set<string>(from)
    const queue = [...out]
    while (queue.length) {
      const id = queue.pop()!
      for (const d of this.deps.get(id) ?? []) if (!out.has(d)) {
        out.add(d)
        queue.push(d)
      }
    }
    return out
  }

  /** Cells on some path from `from` to `to`: downstream of `from` (exclusive), upstream of `to` (inclusive). */
  chain(from: readonly string[], to: readonly string[]): string[] {
    const down = this.descendants(from)
    const up = this.ancestors(to)
    const fromSet = new Set(from)
    return this.sorted([...down].filter((id) => up.has(id) && !fromSet.has(id)))
  }

  /** Ids in evaluation order. */
  sorted(ids: Iterable<string>): string[] {
    return [...ids].filter((id) => this.rank.has(id)).sort((a, b) => this.rank.get(a)! - this.rank.get(b)!)
  }

  /** A key describing how a cell is wired (its resolved inputs, unknown names, cycle, duplicate): changes mean re-evaluate. */
  wiring(id: string): string {
    return JSON.stringify([this.deps.get(id), this.unknown.get(id), this.cycle.get(id), this.duplicateOf.get(id)])
  }
}
