/**
 * Cells with their inputs and outputs: what each kind of cell reads (the names its formula or fields mention), how
 * it is prepared once (parsed, compiled, units resolved) and how it computes its value from its inputs' values.
 * Values are SI; showing them in display units is display.ts's job, turning states into result objects results.ts's.
 */
import type { SheetCell, ParameterCell, SpectrumCell, StackCell } from '../schema/sheet'
import { CELL_KINDS, fitCell, formulaCell, parameterCell, stackCell, stackFormulas, sweepCell, toSchemaIssues } from '../schema/sheet'
import type { Num } from '../optics/num'
import { compileFormula, inferDims, type CompiledFormula, type InputDim } from './compile'
import { INPUT_DIGITS, formatNumber, formatPair, formatQuantity, prettyUnit } from './describe'
import { dimEquals, type Dim } from './dimensions'
import { CellError, OutsideDataError, messageOf, outsideDataMessage } from './errors'
import type { Budget } from './limits'
import { CONSTANTS, builtinName } from './names'
import { isReserved, type Node } from './parse'
import { builtinFunction } from './functions/registry'
import { parseUnit, formulaUnitTable } from './units'
import { RecordValue, type Field, type Value } from './values'

export interface PreparedCell {
  cell: SheetCell
  id: string
  name?: string
  kind: SheetCell['kind']
  /** Names this cell reads, in order. */
  reads: string[]
  /** Names among `reads` that must be cells (fit and sweep references); formulas may also read constants and units. */
  cellsOnly: boolean
  compiled?: CompiledFormula
  /** Cells with several formula fields (stacks): each field's compiled formula, keyed by its path ("layers.0.n"). */
  parts?: Map<string, CompiledFormula>
  /** A problem found while preparing (syntax, unit): the cell is an error whatever its inputs. */
  problem?: string
  /** Warnings known before evaluation (a name shadowing a unit or constant). */
  staticWarnings: string[]
}

export interface SweepTable {
  parameter: number[]
  outputs: Record<string, (number | number[])[]>
}

export interface CellState {
  status: 'ok' | 'error' | 'blocked'
  /** SI value a formula can read: a Num, or a record for spectra and fits. */
  value?: Value
  /** Dimension of a Num value, null when unknown. */
  dim: Dim | null
  warnings: string[]
  error?: string
  /** Fit cells: the result object in display units; sweep cells: the table. */
  shown?: Record<string, unknown> | SweepTable
  /** Fit and sweep cells: the unit their shown numbers are in. */
  unit?: string
  /** Fit and stack cells: the unit of each shown output ("1" for a plain number). */
  units?: Record<string, string>
}

/** What evaluating one cell may ask of the sheet around it. */
export interface Env {
  budget: Budget
  /** The cell a name refers to in this sheet, if any. */
  cellNamed(name: string): PreparedCell | undefined
  /** Current value of a cell (an override during sweeps and model fits). */
  valueOf(id: string): Value | undefined
  stateOf(id: string): CellState | undefined
  /** Cells between `from` (exclusive) and `to` (inclusive), in evaluation order. */
  chain(from: readonly string[], to: readonly string[]): string[]
  /** Evaluates the chain's cells from the overrides, writing every computed value into `overrides`. */
  runChain(chain: readonly string[], overrides: Map<string, Value>): void
  progress(fraction: number): void
}

const SHADOW_UNITS = new Set(formulaUnitTable().keys())

/**
 * What is wrong with a cell that does not match the sheet-file schema (a half-edited cell from the live document, a
 * caller that skipped validation), in the schema's words, or undefined. Figures and notes are not evaluated,
 * so only the evaluated kinds are checked; a spectrum's columns are checked for shape here and entry by entry when
 * it is evaluated, so a million-point column is not validated twice.
 */
const EVALUATED_SCHEMAS: Partial<Record<string, typeof parameterCell | typeof formulaCell | typeof fitCell | typeof sweepCell | typeof stackCell>> = {
  parameter: parameterCell, formula: formulaCell, fit: fitCell, sweep: sweepCell, stack: stackCell,
}

function malformed(cell: SheetCell): string | undefined {
  if (!CELL_KINDS.includes(cell.kind)) return `unknown cell kind ${JSON.stringify(cell.kind)}; expected one of ${CELL_KINDS.join(', ')}`
  if (cell.kind === 'spectrum') {
    const cols: unknown = cell.columns
    if (!cols || typeof cols !== 'object' || Array.isArray(cols)) return 'invalid cell: columns: required (an object of columns)'
    for (const [name, col] of Object.entries(cols as Record<string, unknown>)) {
      const c = col as { unit?: unknown; values?: unknown } | null
      if (!c || typeof c !== 'object') return `invalid cell: columns.${name}: must be an object with unit and values`
      if (typeof c.unit !== 'string') return `invalid cell: columns.${name}.unit: required`
      if (c.values === undefined) {
        const id = (cell as { datasetId?: unknown }).datasetId
        if (typeof id === 'string' && id) return datasetNotLoaded(id)
        return `invalid cell: columns.${name}.values: required (an array of numbers)`
      }
      if (!Array.isArray(c.values)) return `invalid cell: columns.${name}.values: required (an array of numbers)`
    }
    return undefined
  }
  const schema = EVALUATED_SCHEMAS[cell.kind]
  if (!schema) return undefined
  const checked = schema.safeParse(cell)
  if (checked.success) return undefined
  const issues = toSchemaIssues(checked.error, cell)
  return `invalid cell: ${issues.slice(0, 3).map((i) => `${i.path || '(cell)'}: ${i.message}`).join('; ')}`
}

/** Parses, compiles and inspects a cell once; nothing here depends on other cells. */
export function prepareCell(cell: SheetCell): PreparedCell {
  const p: PreparedCell = { cell, id: cell.id, name: cell.name, kind: cell.kind, reads: [], cellsOnly: true, staticWarnings: [] }
  if (typeof cell.name === 'string' && cell.name) {
    const c = CONSTANTS.get(cell.name)
    if (c)
      p.staticWarnings.push(`the name ${cell.name} shadows the built-in constant ${cell.name} (${c.doc.split(', ')[0]}) in this sheet's formulas; rename the cell if formulas should use the constant`)
    else if (SHADOW_UNITS.has(cell.name))
      p.staticWarnings.push(`the name ${cell.name} shadows the unit ${cell.name} in this sheet's formulas; rename the cell if formulas should use the unit`)
    else if (builtinFunction(cell.name))
      p.staticWarnings.push(`the name ${cell.name} is also a library function: ${cell.name}(…) still calls the function, while ${cell.name} alone means this cell; rename the cell to keep formulas clear`)
    else if (isReserved(cell.name))
      p.staticWarnings.push(`the name ${cell.name} is reserved: formulas cannot refer to it; choose another name`)
  }
  const invalid = malformed(cell)
  if (invalid) {
    p.problem = invalid
    return p
  }
  try {
    switch (cell.kind) {
      case 'formula':
        p.compiled = compileFormula(cell.source)
        p.reads = p.compiled.names
        p.cellsOnly = false
        break
      case 'parameter':
        checkUnit(cell.unit)
        break
      case 'spectrum':
        for (const [col, c] of Object.entries(cell.columns)) checkUnit(c.unit, `unit of column ${col}`)
        break
      case 'fit': {
        const names = [cell.x, cell.y]
        if (cell.sigma) names.push(cell.sigma)
        if (cell.method === 'model') {
          if (!cell.model) throw new CellError('a model fit needs "model": the formula cell to fit', 'input')
          if (!cell.parameters?.length) throw new CellError('a model fit needs at least one free parameter in "parameters"', 'input')
          names.push(cell.model, ...cell.parameters.map((q) => q.name))
        }
        if (cell.unit) checkUnit(cell.unit, 'fit unit')
        p.reads = [...new Set(names)]
        break
      }
      case 'sweep':
        if (cell.unit) checkUnit(cell.unit, 'sweep unit')
        if (cell.scale === 'log' && !(cell.from > 0 && cell.to > 0))
          throw new CellError(
            `a log sweep needs from and to above zero, but it runs from ${formatNumber(cell.from, INPUT_DIGITS)} to ${formatNumber(cell.to, INPUT_DIGITS)}; make both positive or use linear steps`,
            'input',
          )
        p.reads = [...new Set([cell.parameter, ...cell.outputs])]
        break
      case 'stack': {
        p.parts = new Map()
        for (const [key, source] of stackFormulas(cell)) {
          try {
            p.parts.set(key, compileFormula(source))
          } catch (err) {
            throw new CellError(`${stackFieldLabel(cell, key)}: ${messageOf(err)}`, err instanceof CellError ? err.kind : 'syntax')
          }
        }
        p.reads = [...new Set([...p.parts.values()].flatMap((c) => c.names))]
        p.cellsOnly = false
        break
      }
      default:
        break
    }
  } catch (err) {
    p.problem = messageOf(err)
  }
  return p
}

function checkUnit(unit: string | undefined, what = 'unit'): void {
  if (unit === undefined) return
  const u = parseUnit(unit)
  if (!u.ok) throw new CellError(`the ${what} ${u.error}`, 'input')
}

/** "the thickness of layer absorber", "the wavelength" … for messages about one field of a stack. */
export function stackFieldLabel(cell: StackCell, key: string): string {
  const [head, a, b] = key.split('.')
  const what = (f: string): string => (f === 'thickness' ? 'the thickness' : f === 'n' ? 'the index n' : 'the extinction coefficient k')
  if (head === 'layers') return `${what(b)} of layer ${cell.layers[Number(a)]?.name ?? Number(a) + 1}`
  if (head === 'substrate') return `${what(a)} of the substrate ${cell.substrate.name}`
  return head === 'angle' ? 'the angle' : head === 'ambient' ? 'the ambient index' : 'the wavelength'
}

/** Dimension (or record) of each bound name of a formula, for the dimension pass. */
export function inputDims(p: PreparedCell, env: Env): InputDim[] {
  return dimsOfNames(p.reads, env)
}

/** Dimension (or record) of each of the given names. */
export function dimsOfNames(names: readonly string[], env: Env): InputDim[] {
  return names.map((name) => {
    const target = env.cellNamed(name)
    if (target) {
      const v = env.valueOf(target.id)
      if (v instanceof RecordValue) return { record: v }
      return { dim: env.stateOf(target.id)?.dim ?? null }
    }
    return { dim: builtinName(name)?.dim ?? null }
  })
}

/** Values bound to a formula's free names: cells' values, else constants and units. */
export function inputValues(p: PreparedCell, env: Env): Value[] {
  return valuesOfNames(p.reads, env)
}

/** Values of the given names: cells' values, else constants and units. */
export function valuesOfNames(names: readonly string[], env: Env): Value[] {
  return names.map((name) => {
    const target = env.cellNamed(name)
    if (target) {
      const v = env.valueOf(target.id)
      if (v === undefined) throw new CellError(`input ${name} has no value`, 'input')
      return v
    }
    const b = builtinName(name)
    if (!b) throw new CellError(`unknown name: ${name}`, 'name')
    return b.value
  })
}

/**
 * How the numbers of an "outside the data" message read: in the display unit of the cell holding interpolate's x
 * (`interpolate(q, E, alpha)` with E shown in eV → "2.5 eV"), else in the usual unit of its dimension, else bare.
 */
function dataUnitShow(p: PreparedCell, env: Env): (si: number) => string {
  const calls: Node[] = []
  const walk = (n: Node): void => {
    if (n.t === 'call') {
      if (n.fn === 'interpolate') calls.push(n)
      n.args.forEach(walk)
    } else if (n.t === 'unary') walk(n.arg)
    else if (n.t === 'binary') {
      walk(n.left)
      walk(n.right)
    } else if (n.t === 'cond') {
      walk(n.test)
      walk(n.then)
      walk(n.else)
    }
    else if (n.t === 'array') n.items.forEach(walk)
  }
  if (p.compiled) walk(p.compiled.tree)
  for (const call of calls) {
    const x = call.t === 'call' ? call.args[1] : undefined
    if (x?.t !== 'name') continue
    const target = env.cellNamed(x.name)
    const dim = target ? env.stateOf(target.id)?.dim ?? null : null
    if (!target) continue
    const shownUnit = (target.cell as { unit?: unknown }).unit
    const shown = typeof shownUnit === 'string' ? shownUnit : undefined
    const u = shown ? parseUnit(shown) : undefined
    if (u?.ok && dim && dimEquals(u.dim, dim)) return (si) => `${formatNumber(si / u.factor)} ${prettyUnit(shown!)}`
    return (si) => formatQuantity(si, dim)
  }
  return (si) => formatNumber(si)
}

/** SI value of a parameter cell. */
export function parameterValue(cell: ParameterCell): { value: number; dim: Dim } {
  const u = parseUnit(cell.unit ?? '')
  if (!u.ok) throw new CellError(`the unit ${u.error}`, 'input')
  return { value: cell.value * u.factor, dim: u.dim }
}

export function evaluateParameter(cell: ParameterCell): CellState {
  const { value, dim } = parameterValue(cell)
  const warnings = cell.min === undefined && cell.max === undefined ? [] : rangeWarnings(cell)
  return { status: 'ok', value, dim, warnings }
}

/** A parameter outside its own min…max, or with an empty range, in the cell's unit and with what to change. */
function rangeWarnings(cell: ParameterCell): string[] {
  const warnings: string[] = []
  const unit = cell.unit ? ` ${cell.unit}` : ''
  const { min, max } = cell
  if (min !== undefined && max !== undefined && min > max) {
    const [lo, hi] = formatPair(min, max)
    warnings.push(`the range is empty: the minimum ${lo}${unit} is above the maximum ${hi}${unit}; swap them`)
  }
  if (min !== undefined && cell.value < min) {
    const [v, m] = formatPair(cell.value, min)
    warnings.push(`the value ${v}${unit} is below the minimum ${m}${unit}; raise the value or lower the minimum`)
  }
  if (max !== undefined && cell.value > max) {
    const [v, m] = formatPair(cell.value, max)
    warnings.push(`the value ${v}${unit} is above the maximum ${m}${unit}; lower the value or raise the maximum`)
  }
  return warnings
}

/** Runs a formula's compiled closures on its inputs' current values. */
export function formulaValue(p: PreparedCell, env: Env): Num {
  if (!p.compiled) throw new CellError(p.problem ?? 'the formula did not compile', 'syntax')
  return p.compiled.run(inputValues(p, env), env.budget)
}

export function evaluateFormula(p: PreparedCell, env: Env): CellState {
  let value: Num
  try {
    value = formulaValue(p, env)
  } catch (err) {
    if (err instanceof OutsideDataError) throw new CellError(outsideDataMessage(err.point, err.lo, err.hi, dataUnitShow(p, env)), 'value')
    throw err
  }
  const dims = inferDims(p.compiled as CompiledFormula, inputDims(p, env))
  const warnings = [...dims.warnings]
  return { status: 'ok', value, dim: dims.dim, warnings }
}

/**
 * The error of a spectrum cell whose numbers are in a stored dataset that the caller has not loaded into its columns
 * (the page's worker and the server load them by id before evaluating; a file carries them inline).
 */
export function datasetNotLoaded(datasetId: string): string {
  return `the numbers of this spectrum are kept in dataset ${datasetId}, which is not loaded here; open the sheet in the app or export it (export writes the numbers into the file)`
}

/** A spectrum cell's columns in SI as a record (`filmB.T`); empty entries (null) become NaN. */
export function evaluateSpectrum(cell: SpectrumCell): CellState {
  const fields = new Map<string, Field>()
  const warnings: string[] = []
  let length = -1
  for (const [name, col] of Object.entries(cell.columns)) {
    if (!col.values) throw new CellError(cell.datasetId ? datasetNotLoaded(cell.datasetId) : `column ${name} has no values`, 'input')
    const u = parseUnit(col.unit)
    if (!u.ok) throw new CellError(`the unit of column ${name} ${u.error}`, 'input')
    const raw = col.values
    const values = new Float64Array(raw.length)
    let gaps = 0
    raw.forEach((x, i) => {
      if (x === null) gaps++
      else if (typeof x !== 'number') throw new CellError(`column ${name}: entry ${i} is not a number (${JSON.stringify(x)?.slice(0, 40)})`, 'input')
      values[i] = x === null ? NaN : x * u.factor
    })
    if (gaps) warnings.push(`column ${name} has ${gaps} empty entr${gaps === 1 ? 'y' : 'ies'} (read as NaN)`)
    if (length >= 0 && raw.length !== length) warnings.push(`the columns have different lengths (${length} and ${raw.length} in ${name})`)
    length = Math.max(length, raw.length)
    fields.set(name, { value: values, dim: u.dim })
  }
  if (fields.size === 0) warnings.push('the spectrum has no columns')
  return { status: 'ok', value: new RecordValue('spectrum', cell.name, fields), dim: null, warnings }
}
