/**
 * New cells as the add menu makes them: a sensible start for each kind with a name not yet used in the sheet.
 * The starting values are plain placeholders a researcher overwrites, chosen so the cell evaluates at once.
 */
import type { Cell, CellKind, SheetCell } from '../../../shared/schema/sheet'

export interface KindInfo {
  kind: CellKind
  label: string
  hint: string
  /** Single-letter key in the add menu. */
  key: string
}

/** Kinds a person can add from the page (a spectrum opens the import of a measured file). */
export const ADDABLE_KINDS: KindInfo[] = [
  { kind: 'parameter', label: 'Parameter', hint: 'a named input with unit and range', key: 'p' },
  { kind: 'formula', label: 'Formula', hint: 'a named computed quantity', key: 'f' },
  { kind: 'spectrum', label: 'Spectrum', hint: 'measured data from an instrument file', key: 'm' },
  { kind: 'fit', label: 'Fit', hint: 'Tauc, Urbach or a model fit', key: 't' },
  { kind: 'sweep', label: 'Sweep', hint: 'one parameter over a range', key: 's' },
  { kind: 'figure', label: 'Figure', hint: 'a chart of other cells', key: 'g' },
  { kind: 'note', label: 'Note', hint: 'free text in Markdown', key: 'n' },
]

export const KIND_LABELS: Record<CellKind, string> = {
  parameter: 'parameter',
  formula: 'formula',
  spectrum: 'spectrum',
  fit: 'fit',
  sweep: 'sweep',
  figure: 'figure',
  note: 'note',
  stack: 'stack',
}

const PREFIX: Record<CellKind, string> = {
  parameter: 'p',
  formula: 'f',
  spectrum: 'spectrum',
  fit: 'fit',
  sweep: 'sweep',
  figure: 'fig',
  note: 'note',
  stack: 'stack',
}

/** The first of `base1`, `base2`, … not used by any cell. */
export function freeName(base: string, cells: readonly SheetCell[]): string {
  const used = new Set(cells.map((c) => c.name).filter(Boolean))
  for (let i = 1; ; i++) {
    const candidate = `${base}${i}`
    if (!used.has(candidate)) return candidate
  }
}

/** The name of a copy: `Eg` → `Eg_2` (then `Eg_3`, …), the first not used by any cell. */
export function copyName(name: string, cells: readonly SheetCell[]): string {
  const used = new Set(cells.map((c) => c.name).filter(Boolean))
  const stem = name.replace(/_\d+$/, '')
  for (let i = 2; ; i++) {
    const candidate = `${stem}_${i}`.slice(0, 64)
    if (!used.has(candidate)) return candidate
  }
}

/** A new cell of `kind`, referring to cells above it where that makes a working start. */
export function newCell(kind: CellKind, cells: readonly SheetCell[], above: readonly SheetCell[]): Cell {
  const name = freeName(PREFIX[kind], cells)
  const lastOf = (k: CellKind) => [...above].reverse().find((c) => c.kind === k && c.name)?.name
  const arrays = [...above].reverse().filter((c) => c.kind === 'formula' && c.name)
  switch (kind) {
    case 'parameter':
      return { kind, name, value: 1, min: 0, max: 10 }
    case 'formula':
      return { kind, name, source: '' }
    case 'fit': {
      const x = arrays[1]?.name ?? arrays[0]?.name ?? 'E'
      const y = arrays[0]?.name ?? 'alpha'
      return { kind, name, method: 'tauc', x, y, r: 0.5, unit: 'eV' }
    }
    case 'sweep': {
      const parameter = lastOf('parameter') ?? 'd'
      const output = arrays[0]?.name ?? 'A'
      // the parameter's own slider range and unit make a working start
      const p = above.find((c) => c.kind === 'parameter' && c.name === parameter)
      const ranged = p?.kind === 'parameter' && p.min !== undefined && p.max !== undefined && p.max > p.min
      return {
        kind,
        name,
        parameter,
        from: ranged ? p.min! : 0,
        to: ranged ? p.max! : 1,
        steps: 11,
        ...(p?.kind === 'parameter' && p.unit ? { unit: p.unit } : {}),
        outputs: [output],
      }
    }
    case 'figure': {
      const y = arrays[0]?.name
      const x = arrays[1]?.name
      return { kind, name, traces: x && y ? [{ x, y }] : [] }
    }
    case 'note':
      return { kind, text: '' }
    case 'spectrum':
      return { kind, name, columns: {} }
    case 'stack':
      return { kind, name, layers: [] }
  }
}
