/**
 * Sweep cells: re-evaluate the chosen output cells for each value of one parameter cell (linear or logarithmic
 * steps), yielding the table of DESIGN §5 — the parameter values in the sweep's unit, and one row per value for each
 * output, in that output's display unit. Only the cells between the parameter and the outputs are re-run, from their
 * compiled formulas; everything else keeps its current value.
 */
import type { SweepCell } from '../schema/sheet'
import type { CellState, Env, SweepTable } from './cells'
import { INPUT_DIGITS, dimPhrase, formatNumber, prettyUnit, usualUnit } from './describe'
import { dimEquals } from './dimensions'
import { clean, displayFor, toJson } from './display'
import { CellError, messageOf } from './errors'
import { parseUnit } from './units'
import { asNum, type Value } from './values'
import type { PreparedCell } from './cells'

/** Most numbers one sweep table may hold (steps × output elements), so a sweep cannot exhaust memory. */
export const MAX_SWEEP_NUMBERS = 5_000_000

/**
 * The parameter values of a sweep, in its unit: `steps` values from `from` to `to`, both included, rounded to 15
 * significant digits so the table reads as typed (0.1, 0.4, 0.7 rather than 0.7000000000000001). Log steps are
 * 10^(log10(from) + i·step), exact on whole decades.
 */
export function sweepValues(cell: SweepCell): number[] {
  const n = cell.steps
  const out = new Array<number>(n)
  if (cell.scale === 'log') {
    const a = Math.log10(cell.from)
    const step = (Math.log10(cell.to) - a) / (n - 1)
    for (let i = 0; i < n; i++) out[i] = clean(10 ** (a + i * step))
  } else {
    const step = (cell.to - cell.from) / (n - 1)
    for (let i = 0; i < n; i++) out[i] = clean(cell.from + i * step)
  }
  out[0] = cell.from
  out[n - 1] = cell.to
  return out
}

export function evaluateSweep(p: PreparedCell, env: Env): CellState {
  const cell = p.cell as SweepCell
  const param = env.cellNamed(cell.parameter)
  if (!param || param.kind !== 'parameter')
    throw new CellError(`the swept name ${cell.parameter} must be a parameter cell${param ? ` (it is a ${param.kind} cell)` : ' (no cell has this name)'}`, 'input')
  const paramUnit = param.cell.kind === 'parameter' ? param.cell.unit : undefined
  const unitText = cell.unit ?? paramUnit
  const u = parseUnit(unitText ?? '')
  if (!u.ok) throw new CellError(`the sweep unit ${u.error}`, 'input')
  const paramDim = env.stateOf(param.id)?.dim
  if (paramDim && !dimEquals(paramDim, u.dim))
    throw new CellError(
      `the sweep's unit ${unitText} is for ${dimPhrase(u.dim, false)}, but ${cell.parameter} is ${dimPhrase(paramDim, false)}; give the sweep a unit for ${dimPhrase(paramDim, false)}${usualUnit(paramDim) ? `, such as ${prettyUnit(usualUnit(paramDim))}` : ''}, or leave it empty to use ${cell.parameter}'s unit`,
      'input',
    )
  const outputs = cell.outputs.map((name) => {
    const o = env.cellNamed(name)
    if (!o) throw new CellError(`output ${name} is not a cell of this sheet`, 'name')
    if (o.kind !== 'formula') throw new CellError(`output ${name} must be a formula cell (it is a ${o.kind} cell)`, 'input')
    const shown = displayFor(o.cell.kind === 'formula' ? o.cell.unit : undefined, env.stateOf(o.id)?.dim ?? null)
    return { name, id: o.id, factor: shown.factor }
  })
  const chain = env.chain([param.id], outputs.map((o) => o.id))
  const warnings: string[] = []
  for (const o of outputs)
    if (!chain.includes(o.id)) warnings.push(`the output ${o.name} does not depend on ${cell.parameter}: its rows are all the same; sweep a parameter that ${o.name} uses, or drop it from the outputs`)

  const values = sweepValues(cell)
  const table: SweepTable = { parameter: values, outputs: {} }
  const rows = outputs.map((o) => {
    const r: (number | number[])[] = new Array(values.length)
    table.outputs[o.name] = r
    return r
  })
  let reported = 0
  for (let i = 0; i < values.length; i++) {
    env.budget.tick()
    const overrides = new Map<string, Value>([[param.id, values[i] * u.factor]])
    try {
      env.runChain(chain, overrides)
    } catch (err) {
      if (err instanceof CellError && err.kind === 'time') throw err
      throw new CellError(`at ${cell.parameter} = ${formatNumber(values[i], INPUT_DIGITS)}${unitText ? ` ${unitText}` : ''}: ${messageOf(err)}`, 'value')
    }
    let size = 0
    outputs.forEach((o, k) => {
      const v = asNum((overrides.get(o.id) ?? env.valueOf(o.id)) as Value, o.name)
      size += typeof v === 'number' ? 1 : v.length
      rows[k][i] = toJson(v, o.factor, true)
    })
    if (i === 0 && size * values.length > MAX_SWEEP_NUMBERS)
      throw new CellError(
        `the sweep table would hold ${(size * values.length).toLocaleString('en-US')} numbers (${values.length.toLocaleString('en-US')} steps × ${size.toLocaleString('en-US')} per step); the limit is ${MAX_SWEEP_NUMBERS.toLocaleString('en-US')}: use fewer steps or shorter arrays`,
        'limit',
      )
    const fraction = (i + 1) / values.length
    if (fraction - reported >= 0.05) {
      reported = fraction
      env.progress(fraction)
    }
  }
  return { status: 'ok', dim: null, warnings, shown: table, unit: unitText }
}
