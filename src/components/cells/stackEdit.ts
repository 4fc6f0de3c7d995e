/**
 * The stack card's edits and result summary, apart from the component so they can be tested: layers added, moved and
 * removed as whole new arrays (the document holds `layers` as one value), layer names checked as the engine would,
 * and the outputs summarised over the wavelength grid.
 */
import { IDENTIFIER, type StackCell, type StackLayer } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'
import type { FigureCell } from '../../../shared/schema/sheet'

/** A new layer under the others, named layer1, layer2, … (the first not taken by a layer or the substrate). */
export function withNewLayer(cell: StackCell): StackLayer[] {
  const taken = new Set([...cell.layers.map((l) => l.name), cell.substrate.name])
  let i = cell.layers.length + 1
  while (taken.has(`layer${i}`)) i++
  return [...cell.layers, { name: `layer${i}`, thickness: '100*nm', n: '2', k: '0' }]
}

/** The layers with layer i moved by `by` places (−1 towards the ambient); unchanged at either end. */
export function movedLayer(layers: readonly StackLayer[], i: number, by: -1 | 1): StackLayer[] {
  const j = i + by
  if (i < 0 || i >= layers.length || j < 0 || j >= layers.length) return [...layers]
  const out = [...layers]
  ;[out[i], out[j]] = [out[j], out[i]]
  return out
}

export function withoutLayer(layers: readonly StackLayer[], i: number): StackLayer[] {
  return layers.filter((_, j) => j !== i)
}

export function withLayerField(layers: readonly StackLayer[], i: number, patch: Partial<StackLayer>): StackLayer[] {
  return layers.map((l, j) => (j === i ? { ...l, ...patch } : l))
}

/**
 * What is wrong with a new name for layer `index` (-1: the substrate), or null: it must be an identifier (its
 * absorptance is `stack.A_<name>`) and differ from the other layers' names.
 */
export function layerNameProblem(cell: StackCell, index: number, name: string): string | null {
  if (!IDENTIFIER.test(name)) return `"${name}" cannot name a layer: use a letter first, then letters, digits or _ (its absorptance is ${cell.name}.A_${name.replace(/\W/g, '_')}).`
  const others = [...cell.layers.map((l, j) => (j === index ? null : l.name)), index === -1 ? null : cell.substrate.name]
  if (others.includes(name)) return `Another layer is named ${name}; each layer needs its own name.`
  return null
}

export interface StackRow {
  ref: string
  meaning: string
  mean: number
  min: number
  max: number
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

/** One row per output (R, T, A, then each layer's and the substrate's A): its mean, minimum and maximum over the grid. */
export function stackRows(cell: StackCell, result: CellResult | undefined): StackRow[] {
  const value = result?.status === 'ok' ? result.value : undefined
  if (!isRecord(value)) return []
  const meaning: Record<string, string> = { R: 'reflectance', T: 'transmittance', A: 'absorptance, all layers and the substrate' }
  for (const l of cell.layers) meaning[`A_${l.name}`] = `absorbed in ${l.name}`
  meaning[`A_${cell.substrate.name}`] = `absorbed in the substrate ${cell.substrate.name}`
  const rows: StackRow[] = []
  for (const [key, v] of Object.entries(value)) {
    if (key === 'wavelength' || !Array.isArray(v)) continue
    let sum = 0
    let n = 0
    let min = Infinity
    let max = -Infinity
    for (const x of v)
      if (typeof x === 'number' && Number.isFinite(x)) {
        sum += x
        n++
        min = Math.min(min, x)
        max = Math.max(max, x)
      }
    if (n === 0) continue
    rows.push({ ref: `${cell.name}.${key}`, meaning: meaning[key] ?? '', mean: sum / n, min, max })
  }
  return rows
}

/** The stack's own figure: R, T and each absorptance against the wavelength, visible band shaded. */
export function stackFigureCell(cell: StackCell, result: CellResult | undefined): FigureCell {
  const value = result?.status === 'ok' && isRecord(result.value) ? result.value : {}
  const keys = Object.keys(value).filter((k) => k !== 'wavelength')
  const label = (k: string): string => (k.startsWith('A_') ? `A ${k.slice(2)}` : k)
  return {
    kind: 'figure',
    traces: keys.map((k) => ({ x: `${cell.name}.wavelength`, y: `${cell.name}.${k}`, label: label(k), style: 'line' as const })),
    x: { label: 'Wavelength', visibleBand: true },
    y: { label: 'fraction of the incident light', min: 0, max: 1 },
  }
}
