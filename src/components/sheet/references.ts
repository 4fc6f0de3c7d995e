/**
 * Which cells a cell reads, found by name without running the engine. The page uses it only to mark results as
 * stale the moment an edit is made (the worker's answer then says exactly what was recomputed), so reading a little
 * too much is harmless and reading too little is not: every identifier in a source counts.
 */
import { stackFormulas, type SheetCell } from '../../../shared/schema/sheet'

const IDENT = /[A-Za-z_][A-Za-z0-9_]*/g

function identifiers(text: string | undefined, into: Set<string>): void {
  if (!text) return
  for (const match of text.matchAll(IDENT)) into.add(match[0])
}

/** Names a cell refers to (a superset: function and unit names in formulas are included and simply never match). */
export function referencedNames(cell: SheetCell): Set<string> {
  const names = new Set<string>()
  switch (cell.kind) {
    case 'formula':
      identifiers(cell.source, names)
      break
    case 'fit':
      names.add(cell.x)
      names.add(cell.y)
      if (cell.model) names.add(cell.model)
      if (cell.sigma) names.add(cell.sigma)
      for (const p of cell.parameters ?? []) names.add(p.name)
      break
    case 'sweep':
      names.add(cell.parameter)
      for (const o of cell.outputs) names.add(o)
      break
    case 'figure':
      for (const t of cell.traces) {
        identifiers(t.x, names)
        identifiers(t.y, names)
      }
      for (const m of cell.marks ?? []) identifiers(m, names)
      if (cell.sweep) names.add(cell.sweep)
      break
    case 'stack':
      for (const [, source] of stackFormulas(cell)) identifiers(source, names)
      break
    default:
      break
  }
  return names
}

/**
 * The ids of the given cells and of every cell that depends on them, directly or through others. A sweep reads
 * everything its outputs read, so it follows from them like any other dependent.
 */
export function dependentsOf(cells: readonly SheetCell[], changedIds: Iterable<string>): Set<string> {
  const readers = new Map<string, string[]>() // name → ids of cells that mention it
  for (const cell of cells) {
    for (const name of referencedNames(cell)) {
      const list = readers.get(name)
      if (list) list.push(cell.id)
      else readers.set(name, [cell.id])
    }
  }
  const byId = new Map(cells.map((c) => [c.id, c]))
  const out = new Set<string>()
  const queue = [...changedIds]
  while (queue.length > 0) {
    const id = queue.pop()!
    if (out.has(id)) continue
    out.add(id)
    const name = byId.get(id)?.name
    if (name) for (const reader of readers.get(name) ?? []) if (!out.has(reader)) queue.push(reader)
  }
  return out
}
