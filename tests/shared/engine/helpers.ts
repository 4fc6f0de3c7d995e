/** Small helpers for engine tests: build a sheet from cells, evaluate it, pick a cell's result by name. */
import { evaluateSheet, type EngineOptions } from '../../../shared/engine/index'
import type { CellResult, EvaluationResult } from '../../../shared/schema/result'
import { parseSheetFile, type Cell, type SheetCell } from '../../../shared/schema/sheet'

export function sheetOf(cells: unknown[], title = 'test sheet'): { format: 'penumbra.sheet'; version: 1; title: string; cells: Cell[] } {
  const r = parseSheetFile({ format: 'penumbra.sheet', version: 1, title, cells })
  if (!r.ok) throw new Error(`test sheet is invalid: ${r.issues.map((i) => `${i.path}: ${i.message}`).join('; ')}`)
  return r.value as { format: 'penumbra.sheet'; version: 1; title: string; cells: Cell[] }
}

export function run(cells: unknown[], options?: EngineOptions): EvaluationResult {
  return evaluateSheet(sheetOf(cells), options)
}

export function pick(result: EvaluationResult, name: string): CellResult {
  const c = result.cells.find((x) => x.name === name)
  if (!c) throw new Error(`no cell ${name} in the result`)
  return c
}

/** Evaluates one formula (with optional other cells) and returns its result. */
export function formula(source: string, unit?: string, others: unknown[] = []): CellResult {
  return pick(run([...others, { kind: 'formula', name: 'out', source, ...(unit ? { unit } : {}) }]), 'out')
}

/** The value of an ok formula as a number (fails the test otherwise). */
export function num(source: string, unit?: string, others: unknown[] = []): number {
  const r = formula(source, unit, others)
  if (r.status !== 'ok' || typeof r.value !== 'number') throw new Error(`${source}: ${r.status} ${r.error ?? JSON.stringify(r.value)}`)
  return r.value
}

export function arr(source: string, unit?: string, others: unknown[] = []): number[] {
  const r = formula(source, unit, others)
  if (r.status !== 'ok' || !Array.isArray(r.value)) throw new Error(`${source}: ${r.status} ${r.error ?? JSON.stringify(r.value)}`)
  return r.value as number[]
}

export function withIds(cells: unknown[]): SheetCell[] {
  return sheetOf(cells).cells.map((c, i) => ({ ...c, id: c.id ?? `c${i}` }) as SheetCell)
}

/** Relative closeness, for values without a closed form. */
export function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300)
}
