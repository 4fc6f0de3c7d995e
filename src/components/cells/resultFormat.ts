/** How results read on a card: a number with its unit, an array as length and range, a blocked input by name. */
import { formatNumber, formatWithError } from '../../../shared/plot/format'
import { prettyUnit as plotUnit } from '../../../shared/plot/units'
import type { CellResult } from '../../../shared/schema/result'

export { formatNumber, formatWithError }

/**
 * A unit as a card shows it: the figures' pretty form (`1/cm` → "cm⁻¹", `um` → "µm"), and a product written with a
 * centred dot, as in print: the SI unit `1/(m^3*s)` of a cell without a display unit → "1/(m³·s)".
 */
export function prettyUnit(unit: string | undefined): string {
  return plotUnit(unit).replace(/\s*\*\s*/g, '·')
}

export interface ArraySummary {
  length: number
  finite: number
  min: number
  max: number
  /** The values as numbers (null and non-numbers become NaN), for the sparkline. */
  values: number[]
}

export function isNumberArray(v: unknown): v is (number | null)[] {
  return Array.isArray(v) && v.every((x) => typeof x === 'number' || x === null)
}

export function summarizeArray(values: readonly (number | null)[]): ArraySummary {
  let min = Infinity
  let max = -Infinity
  let finite = 0
  const out = new Array<number>(values.length)
  for (let i = 0; i < values.length; i++) {
    const v = values[i]
    const n = typeof v === 'number' ? v : NaN
    out[i] = n
    if (Number.isFinite(n)) {
      finite++
      if (n < min) min = n
      if (n > max) max = n
    }
  }
  return { length: values.length, finite, min, max, values: out }
}

/** `1.48`, `eV` → "1.48 eV"; a unit of `%` sits close: "84.2 %". */
export function withUnit(text: string, unit: string | undefined): string {
  const u = prettyUnit(unit)
  return u ? `${text} ${u}` : text
}

/** The name of the failed input in a `blocked` result ("blocked: input u failed" → "u"), when it says. */
export function blockedInput(result: CellResult): string | null {
  const m = /input\s+"?([A-Za-z][A-Za-z0-9_]*)"?/.exec(result.error ?? '')
  return m ? m[1] : null
}

/**
 * Makes an engine message read as a sentence: capital first letter, a full stop at the end. A message that starts
 * with a name from the sheet or the library keeps it as written, since names are case-sensitive:
 * "photon_wavelength: E should be an energy" stays so, "unknown name: x" → "Unknown name: x.".
 */
export function sentence(text: string | undefined): string {
  const t = (text ?? '').trim()
  if (!t) return ''
  const lead = /^([A-Za-z][A-Za-z0-9_]*)([:(.[]?)/.exec(t)
  const isName = !!lead && (/[_\d]/.test(lead[1]) || lead[2] !== '')
  const capital = isName ? t : t[0].toUpperCase() + t.slice(1)
  return /[.!?]$/.test(capital) ? capital : `${capital}.`
}
