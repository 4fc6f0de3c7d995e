/**
 * New cells as the add menu makes them: a sensible start for each kind with a name not yet used in the sheet.
 * The starting values are plain placeholders a researcher overwrites, chosen so the cell evaluates at once.
 */
import type { Cell, CellKind, FigureTrace, SheetCell } from '../../../shared/schema/sheet'
import { referencedNames } from './references'

export interface KindInfo {
  kind: CellKind
  label: string
  hint: string
}

/** Kinds a person can add from the page (a spectrum opens the import of a measured file). */
export const ADDABLE_KINDS: KindInfo[] = [
  { kind: 'parameter', label: 'Parameter', hint: 'a named input with unit and range' },
  { kind: 'formula', label: 'Formula', hint: 'a named computed quantity' },
  { kind: 'spectrum', label: 'Spectrum', hint: 'measured data from an instrument file' },
  { kind: 'fit', label: 'Fit', hint: 'Tauc, Urbach or a model fit' },
  { kind: 'sweep', label: 'Sweep', hint: 'one parameter over a range' },
  { kind: 'figure', label: 'Figure', hint: 'a chart of other cells' },
  { kind: 'stack', label: 'Stack', hint: 'layers on a substrate: R, T and each layer\'s absorptance' },
  { kind: 'note', label: 'Note', hint: 'free text in Markdown' },
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

const GRID = /\b(log)?grid\s*\(/

/**
 * A series worth plotting first: the latest array above drawn against the grid it is computed on (`alpha` against
 * `E` when alpha's formula reads E, directly or through other formulas, and E is made by grid() or loggrid()). With
 * `lengthOf` (element counts of the current results) both must be arrays of the same length. Else the first two
 * columns of the latest spectrum; else nothing, and the figure's editor asks.
 */
export function defaultSeries(above: readonly SheetCell[], lengthOf: (name: string) => number | undefined = () => undefined): FigureTrace | undefined {
  const formulas = new Map(above.filter((c) => c.kind === 'formula' && c.name).map((c) => [c.name!, c]))
  const isGrid = (c: SheetCell | undefined) => c?.kind === 'formula' && GRID.test(c.source)
  const fits = (x: string, y: string) => {
    const nx = lengthOf(x)
    const ny = lengthOf(y)
    return (nx === undefined || nx > 1) && (ny === undefined || ny > 1) && (nx === undefined || ny === undefined || nx === ny)
  }
  for (const y of [...above].reverse()) {
    if (y.kind !== 'formula' || !y.name || isGrid(y)) continue
    // the grids this formula reads, nearest first
    const seen = new Set<string>([y.name])
    let frontier = [y.name]
    while (frontier.length > 0) {
      const next: string[] = []
      for (const name of frontier) {
        const cell = formulas.get(name)
        if (!cell) continue
        for (const r of referencedNames(cell)) {
          if (seen.has(r) || !formulas.has(r)) continue
          seen.add(r)
          if (isGrid(formulas.get(r)) && fits(r, y.name)) return { x: r, y: y.name }
          next.push(r)
        }
      }
      frontier = next
    }
  }
  const spectrum = [...above].reverse().find((c) => c.kind === 'spectrum' && c.name && Object.keys(c.columns ?? {}).length >= 2)
  if (spectrum?.kind === 'spectrum') {
    const [x, y] = Object.keys(spectrum.columns)
    return { x: `${spectrum.name}.${x}`, y: `${spectrum.name}.${y}` }
  }
  return undefined
}

/**
 * A new cell of `kind`, referring to cells above it where that makes a working start. `lengthOf` gives the element
 * count of a named cell's current result, where known.
 */
export function newCell(kind: CellKind, cells: readonly SheetCell[], above: readonly SheetCell[], lengthOf?: (name: string) => number | undefined): Cell {
  const name = freeName(PREFIX[kind], cells)
  const lastOf = (k: CellKind) => [...above].reverse().find((c) => c.kind === k && c.name)?.name
  const arrays = [...above].reverse().filter((c) => c.kind === 'formula' && c.name)
  switch (kind) {
    case 'parameter':
      return { kind, name, value: 1, min: 0, max: 10 }
    case 'formula':
      return { kind, name, source: '' }
    case 'fit': {
      const series = defaultSeries(above, lengthOf)
      const x = series?.x ?? arrays[1]?.name ?? arrays[0]?.name ?? 'E'
      const y = series?.y ?? arrays[0]?.name ?? 'alpha'
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
      const series = defaultSeries(above, lengthOf)
      return { kind, name, traces: series ? [series] : [] }
    }
    case 'note':
      return { kind, text: '' }
    case 'spectrum':
      return { kind, name, columns: {} }
    case 'stack': {
      // the nearest length-valued grid above is the usual wavelength grid; a working start otherwise
      const lam = arrays.find((c) => c.kind === 'formula' && /^(nm|um)$|^lam|wavelength/i.test(c.unit ?? c.name ?? ''))?.name
      return {
        kind, name, wavelength: lam ?? 'grid(300*nm, 1100*nm, 401)', ambient: '1', angle: '0*deg', polarization: 'unpolarized',
        layers: [{ name: 'film', thickness: '500*nm', n: '2.5', k: '0.05' }],
        substrate: { name: 'glass', n: '1.52', k: '0', thickness: '1*mm', coherent: false },
      }
    }
  }
}
