/**
 * Resolving what a figure names ("alpha", "filmB.T", "edge.Eg") against the sheet's results, by cell name, into
 * numbers with their unit. Every failure is a plain sentence naming the cell, never an exception.
 */
import type { CellResult } from '../schema/result'

export type Resolved<T> = { ok: true; value: T } | { ok: false; message: string }

/** A resolved reference: numbers in `unit` (the display unit they were computed in; '' when none). */
export type Quantity =
  | { kind: 'array'; ref: string; cell: string; values: number[]; unit: string }
  | { kind: 'scalar'; ref: string; cell: string; value: number; error?: number; unit: string }

export type Results = Record<string, CellResult | undefined>

/** Fit outputs given in the fit's own unit (DESIGN §5), for results that do not state their units. */
const FIT_ENERGIES = new Set(['Eg', 'Eg_err', 'Eu', 'Eu_err'])

/** The unit a fit or stack result states for one output ('' for a plain number), else the fallback. */
function statedUnit(result: CellResult, key: string, fallback: string): string {
  const u = result.units?.[key]
  return u === undefined ? fallback : u === '1' ? '' : u
}

function toNumbers(values: readonly unknown[]): number[] {
  const out = new Array<number>(values.length)
  for (let i = 0; i < values.length; i++) {
    const v = values[i]
    out[i] = typeof v === 'number' ? v : NaN
  }
  return out
}

function isNumberArray(v: unknown): v is (number | null)[] {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null)
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v)
}

/** The reason a cell's result cannot be used, or null when it can. */
export function unusable(name: string, result: CellResult | undefined): string | null {
  if (!result) return `There is no cell named "${name}" in this sheet.`
  if (result.status === 'error') return `Cell "${name}" has an error${result.error ? `: ${stripStop(result.error)}` : ''}.`
  if (result.status === 'blocked')
    return `Cell "${name}" is blocked${result.error ? ` (${stripStop(result.error)})` : ''}; fix that input first.`
  if (result.value === undefined) return `Cell "${name}" has no result yet.`
  return null
}

function stripStop(s: string): string {
  return s.replace(/[.\s]+$/, '')
}

/**
 * Resolves one reference: a parameter or formula cell name gives its value; `spectrum.column` a dataset column
 * (nulls become NaN, a gap); `fit.key` one fit output and `stack.key` one stack output, each in the unit the result
 * states for it.
 */
export function resolveRef(ref: string, results: Results): Resolved<Quantity> {
  const text = ref.trim()
  if (text === '') return { ok: false, message: 'No cell is named here yet.' }
  const dot = text.indexOf('.')
  const name = dot < 0 ? text : text.slice(0, dot)
  const member = dot < 0 ? undefined : text.slice(dot + 1)
  const result = Object.hasOwn(results, name) ? results[name] : undefined
  const why = unusable(name, result)
  if (why || !result) return { ok: false, message: why ?? `There is no cell named "${name}" in this sheet.` }
  const value = result.value
  const unit = result.unit ?? ''

  switch (result.kind) {
    case 'spectrum': {
      const columns = isRecord(value) && isRecord(value.columns) ? value.columns : {}
      const units = isRecord(value) && isRecord(value.units) ? value.units : {}
      const names = Object.keys(columns)
      if (member === undefined)
        return { ok: false, message: `"${name}" is a spectrum; name one of its columns (${names.map((c) => `${name}.${c}`).join(', ') || 'it has none'}).` }
      const col = columns[member]
      if (!isNumberArray(col))
        return { ok: false, message: `Spectrum "${name}" has no column "${member}"; its columns are ${names.join(', ') || 'none'}.` }
      const u = units[member]
      return { ok: true, value: { kind: 'array', ref: text, cell: name, values: toNumbers(col), unit: typeof u === 'string' ? u : '' } }
    }
    case 'fit': {
      if (!isRecord(value)) return { ok: false, message: `Fit "${name}" has no result yet.` }
      const key = member ?? ('Eg' in value ? 'Eg' : 'Eu' in value ? 'Eu' : undefined)
      if (key === undefined) return { ok: false, message: `"${name}" is a fit; name one of its values (${Object.keys(value).map((k) => `${name}.${k}`).join(', ')}).` }
      const v = value[key]
      const keyUnit = statedUnit(result, key, FIT_ENERGIES.has(key) ? unit : '')
      if (typeof v === 'number') {
        const errKey = `${key}_err`
        const err = typeof value[errKey] === 'number' ? (value[errKey] as number) : undefined
        return { ok: true, value: { kind: 'scalar', ref: member ? text : `${name}.${key}`, cell: name, value: v, error: err, unit: keyUnit } }
      }
      if (isNumberArray(v)) return { ok: true, value: { kind: 'array', ref: text, cell: name, values: toNumbers(v), unit: keyUnit } }
      return { ok: false, message: `Fit "${name}" has no value "${key}"; it has ${Object.keys(value).join(', ')}.` }
    }
    case 'stack': {
      if (!isRecord(value)) return { ok: false, message: `Stack "${name}" has no result yet.` }
      const outputs = Object.keys(value)
      if (member === undefined)
        return { ok: false, message: `"${name}" is a stack; name one of its outputs (${outputs.map((k) => `${name}.${k}`).join(', ')}).` }
      const v = value[member]
      if (!isNumberArray(v)) return { ok: false, message: `Stack "${name}" has no output "${member}"; it has ${outputs.join(', ')}.` }
      return { ok: true, value: { kind: 'array', ref: text, cell: name, values: toNumbers(v), unit: statedUnit(result, member, '') } }
    }
    case 'sweep':
      return {
        ok: false,
        message: `"${name}" is a sweep: it gives one curve per parameter value. Choose it as the figure's sweep to draw its family of curves or its map.`,
      }
    case 'figure':
    case 'note':
      return { ok: false, message: `"${name}" is a ${result.kind} cell and has no numbers to draw.` }
    default: {
      if (member !== undefined) return { ok: false, message: `"${name}" is a ${result.kind} cell; it has no member "${member}".` }
      if (typeof value === 'number') return { ok: true, value: { kind: 'scalar', ref: text, cell: name, value, unit } }
      if (isNumberArray(value)) return { ok: true, value: { kind: 'array', ref: text, cell: name, values: toNumbers(value), unit } }
      return { ok: false, message: `Cell "${name}" does not hold numbers that can be drawn.` }
    }
  }
}

/** Every reference a figure could draw from the results, for pickers: cell names, spectrum columns, fit outputs. */
export function drawableRefs(results: Results): { ref: string; unit: string; kind: string; length: number }[] {
  const out: { ref: string; unit: string; kind: string; length: number }[] = []
  for (const [name, r] of Object.entries(results)) {
    if (!r || r.status !== 'ok') continue
    const v = r.value
    if (r.kind === 'spectrum' && isRecord(v) && isRecord(v.columns)) {
      const units = isRecord(v.units) ? v.units : {}
      for (const [col, vals] of Object.entries(v.columns))
        if (Array.isArray(vals)) out.push({ ref: `${name}.${col}`, unit: typeof units[col] === 'string' ? (units[col] as string) : '', kind: 'spectrum', length: vals.length })
    } else if (r.kind === 'fit' && isRecord(v)) {
      for (const [key, val] of Object.entries(v))
        if (typeof val === 'number' || isNumberArray(val))
          out.push({ ref: `${name}.${key}`, unit: statedUnit(r, key, FIT_ENERGIES.has(key) ? (r.unit ?? '') : ''), kind: 'fit', length: Array.isArray(val) ? val.length : 1 })
    } else if (r.kind === 'stack' && isRecord(v)) {
      for (const [key, val] of Object.entries(v))
        if (isNumberArray(val)) out.push({ ref: `${name}.${key}`, unit: statedUnit(r, key, ''), kind: 'stack', length: val.length })
    } else if (typeof v === 'number' || isNumberArray(v)) {
      out.push({ ref: name, unit: r.unit ?? '', kind: r.kind, length: Array.isArray(v) ? v.length : 1 })
    }
  }
  return out
}
