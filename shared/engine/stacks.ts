/**
 * Stack cells: a multilayer of coherent thin layers on a substrate over a wavelength grid (shared/optics/stack). Each
 * field is a formula evaluated with the sheet's names, so n and k may be constants, dispersion models or spectrum
 * columns interpolated onto the grid. The outputs — R, T, A and A_<layer> for every layer and the substrate, plus the
 * grid as `wavelength` — form a record formulas read as `cell1.R`; all are fractions but the grid (a length).
 */
import type { StackCell } from '../schema/sheet'
import type { Num } from '../optics/num'
import { stackResponse } from '../optics/stack'
import type { CellState, Env, PreparedCell } from './cells'
import { dimsOfNames, stackFieldLabel, valuesOfNames } from './cells'
import { inferDims } from './compile'
import { dimPhrase } from './describe'
import { DIMENSIONLESS, LENGTH, dimEquals, type Dim } from './dimensions'
import { displayFor, toJson } from './display'
import { CellError } from './errors'
import { RecordValue, asNum, type Field } from './values'

interface Part {
  value: Num
  dim: Dim | null
}

function evalPart(p: PreparedCell, env: Env, key: string, warnings: string[]): Part {
  const cell = p.cell as StackCell
  const compiled = p.parts?.get(key)
  if (!compiled) throw new CellError(`${stackFieldLabel(cell, key)} did not compile`, 'syntax')
  const label = stackFieldLabel(cell, key)
  let value: Num
  try {
    value = asNum(compiled.run(valuesOfNames(compiled.names, env), env.budget), label)
  } catch (err) {
    if (err instanceof CellError && err.kind === 'time') throw err
    throw new CellError(`${label}: ${(err as Error).message}`, err instanceof CellError ? err.kind : 'value')
  }
  const dims = inferDims(compiled, dimsOfNames(compiled.names, env))
  for (const w of dims.warnings) warnings.push(`${label}: ${w}`)
  return { value, dim: dims.dim }
}

/** Throws when a field's dimension is known and is not the one it needs, with the usual way to write it. */
function needDim(label: string, part: Part, want: Dim, example: string): void {
  if (!part.dim || dimEquals(part.dim, want)) return
  const plain = dimEquals(part.dim, DIMENSIONLESS)
  const wanted = dimEquals(want, LENGTH) ? 'a length' : 'a plain number'
  throw new CellError(
    plain
      ? `${label} is a plain number, but it needs ${wanted}: write it with a unit, e.g. ${example}`
      : `${label} is ${dimPhrase(part.dim)}, but it needs ${wanted}, e.g. ${example}`,
    'input',
  )
}

function needScalar(label: string, v: Num): number {
  if (typeof v !== 'number') throw new CellError(`${label} must be one number, not an array of ${v.length}`, 'input')
  return v
}

/** The unit the grid is shown in: the wavelength cell's own length unit when the field names one cell, else nm. */
function gridUnit(cell: StackCell, env: Env): string {
  const ref = env.cellNamed(cell.wavelength.trim())
  const unit = ref && 'unit' in ref.cell ? (ref.cell.unit as string | undefined) : undefined
  return unit && displayFor(unit, LENGTH).warnings.length === 0 ? unit : 'nm'
}

export function evaluateStack(p: PreparedCell, env: Env): CellState {
  const cell = p.cell as StackCell
  const warnings: string[] = []
  const part = (key: string): Part => evalPart(p, env, key, warnings)
  const lam = part('wavelength')
  needDim('the wavelength', lam, LENGTH, 'grid(300*nm, 1100*nm, 801)')
  const grid = typeof lam.value === 'number' ? Float64Array.of(lam.value) : lam.value
  const length = grid.length
  const overGrid = (key: string, v: Num): Num => {
    if (typeof v === 'number' || v.length === length) return v
    throw new CellError(
      `${stackFieldLabel(cell, key)} has ${v.length} values but the wavelength grid has ${length}; put it on the grid, e.g. interpolate(${cell.wavelength.trim()}, data.wavelength, data.n)`,
      'input',
    )
  }
  const plain = (key: string, example: string): Num => {
    const v = part(key)
    needDim(stackFieldLabel(cell, key), v, DIMENSIONLESS, example)
    return overGrid(key, v.value)
  }
  const length_ = (key: string, example: string): number => {
    const v = part(key)
    needDim(stackFieldLabel(cell, key), v, LENGTH, example)
    return needScalar(stackFieldLabel(cell, key), v.value)
  }
  const ambient = cell.ambient === undefined ? 1 : plain('ambient', '1')
  const angle = cell.angle === undefined ? 0 : needScalar('the angle', plain('angle', '45*deg'))
  const names = new Set<string>()
  for (const l of [...cell.layers, cell.substrate]) {
    if (names.has(l.name)) throw new CellError(`two layers are named ${l.name}; give each layer its own name (its absorptance is ${cell.name}.A_${l.name})`, 'input')
    names.add(l.name)
  }
  const layers = cell.layers.map((_, i) => ({
    d: length_(`layers.${i}.thickness`, '500*nm'),
    n: plain(`layers.${i}.n`, '2.5'),
    k: plain(`layers.${i}.k`, '0.1'),
  }))
  const substrate = {
    n: plain('substrate.n', '1.52'),
    k: plain('substrate.k', '0'),
    d: cell.substrate.thickness === undefined ? undefined : length_('substrate.thickness', '1*mm'),
    coherent: cell.substrate.coherent,
  }
  const polarization = cell.polarization ?? 'unpolarized'
  let r: ReturnType<typeof stackResponse>
  try {
    r = stackResponse(grid, layers, ambient, substrate, angle, polarization)
  } catch (err) {
    throw new CellError((err as Error).message.replace(/^stack: /, ''), 'value')
  }
  if (substrate.d !== undefined && substrate.coherent && substrate.d > 20e-6)
    warnings.push(`the substrate is ${(substrate.d * 1e6).toPrecision(3)} µm thick and set coherent: its fringes are finer than any spectrometer resolves; set coherent to false to add its faces by intensity`)

  const fields = new Map<string, Field>([
    ['wavelength', { value: grid, dim: LENGTH }],
    ['R', { value: r.R, dim: DIMENSIONLESS }],
    ['T', { value: r.T, dim: DIMENSIONLESS }],
    ['A', { value: r.A, dim: DIMENSIONLESS }],
  ])
  cell.layers.forEach((l, j) => fields.set(`A_${l.name}`, { value: r.absorbed[j], dim: DIMENSIONLESS }))
  fields.set(`A_${cell.substrate.name}`, { value: r.absorbed[cell.layers.length], dim: DIMENSIONLESS })

  const unit = gridUnit(cell, env)
  const factor = displayFor(unit, LENGTH).factor
  const shown: Record<string, number | number[]> = {}
  const units: Record<string, string> = {}
  for (const [key, f] of fields) {
    shown[key] = toJson(f.value, key === 'wavelength' ? factor : 1)
    units[key] = key === 'wavelength' ? unit : '1'
  }
  return { status: 'ok', value: new RecordValue('stack', cell.name, fields), dim: null, warnings, shown, unit, units }
}
