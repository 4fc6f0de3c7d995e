/**
 * Cell states → the result objects of DESIGN §5 ("Evaluation results"): values in the cell's display unit (SI where
 * it has none), arrays as number[], the dimension's plain name, warnings; errors and blocked cells with their
 * sentence.
 */
import type { CellResult } from '../schema/result'
import type { ParameterCell, SpectrumCell } from '../schema/sheet'
import type { CellState, PreparedCell } from './cells'
import { dimName } from './dimensions'
import { displayFor, nonFiniteWarning, toJson } from './display'
import { RecordValue } from './values'

export type CellJson = Omit<CellResult, 'index'>

export function toCellJson(p: PreparedCell, s: CellState): CellJson {
  const base: CellJson = { id: p.id, name: p.name, kind: p.kind, status: s.status }
  if (s.status !== 'ok') {
    const out: CellJson = { ...base, error: s.error }
    if (s.warnings.length) out.warnings = s.warnings
    return out
  }
  const warnings = [...s.warnings]
  switch (p.kind) {
    case 'parameter': {
      const cell = p.cell as ParameterCell
      return { ...base, value: cell.value, unit: cell.unit, dimension: s.dim ? dimName(s.dim) : undefined, warnings }
    }
    case 'formula': {
      const unit = 'unit' in p.cell ? (p.cell.unit as string | undefined) : undefined
      const shown = displayFor(unit, s.dim)
      warnings.push(...shown.warnings)
      const v = s.value
      if (v === undefined || v instanceof RecordValue) return { ...base, value: null, warnings }
      const bad = nonFiniteWarning(v)
      if (bad) warnings.push(bad)
      return {
        ...base, value: toJson(v, shown.factor), unit: shown.unit, dimension: s.dim ? dimName(s.dim) : undefined, warnings,
      }
    }
    case 'spectrum': {
      const cell = p.cell as SpectrumCell
      const columns: Record<string, (number | null)[]> = {}
      const units: Record<string, string> = {}
      for (const [name, col] of Object.entries(cell.columns)) {
        columns[name] = col.values ?? []
        units[name] = col.unit
      }
      return { ...base, value: { columns, units }, warnings }
    }
    case 'fit':
    case 'sweep':
    case 'stack': {
      const out: CellJson = { ...base, value: (s.shown ?? null) as CellJson['value'], unit: s.unit, warnings }
      if (s.units) out.units = s.units
      return out
    }
    default:
      return { ...base, value: null, warnings }
  }
}
