/**
 * From SI values to what a cell shows: the display unit's factor when it fits the value's dimension, SI otherwise
 * (with a warning naming both dimensions), and JSON-ready numbers (arrays as number[]).
 */
import type { Num } from '../optics/num'
import { compactUnit, dimPhrase, prettyUnit, quantityOf, usualUnit } from './describe'
import { dimEquals, dimName, dimSymbols, isDimensionless, type Dim } from './dimensions'
import { parseUnit } from './units'

/** Conventional SI unit symbols of named dimensions, for cells without a display unit. */
const SI_UNITS: Record<string, string> = {
  length: 'm', '1/length': '1/m', area: 'm^2', volume: 'm^3', mass: 'kg', time: 's', frequency: 'Hz', current: 'A',
  temperature: 'K', energy: 'J', '1/energy': '1/J', power: 'W', charge: 'C', voltage: 'V', velocity: 'm/s', action: 'J*s',
  permittivity: 'F/m', 'current density': 'A/m^2', irradiance: 'W/m^2', 'spectral irradiance': 'W/m^3',
  'photon flux': '1/(m^2*s)', 'spectral photon flux': '1/(m^3*s)', 'energy/area': 'J/m^2', 'energy/temperature': 'J/K',
  '1/temperature': '1/K', '1/area': '1/m^2', amount: 'mol',
}

/** The SI unit string of a dimension ("J" for energy), or undefined for dimensionless values. */
export function siUnit(dim: Dim): string | undefined {
  if (isDimensionless(dim)) return undefined
  return SI_UNITS[dimName(dim)] ?? dimSymbols(dim).replace(/·/g, '*')
}

export interface Display {
  /** Divide SI values by this to show them. */
  factor: number
  /** The unit the shown values are in (undefined: dimensionless SI). */
  unit: string | undefined
  warnings: string[]
}

/**
 * How to show a value of dimension `dim` in a cell whose display unit is `unitText`. A unit that does not parse, or
 * whose dimension differs from the value's, is reported and the value is shown in SI.
 */
export function displayFor(unitText: string | undefined, dim: Dim | null): Display {
  if (unitText === undefined || unitText.trim() === '') return { factor: 1, unit: dim ? siUnit(dim) : undefined, warnings: [] }
  const u = parseUnit(unitText)
  if (!u.ok) {
    return {
      factor: 1, unit: dim ? siUnit(dim) : undefined,
      warnings: [`the display unit ${u.error}; the value is shown in ${shownIn(dim)}`],
    }
  }
  if (dim && !dimEquals(dim, u.dim)) {
    return { factor: 1, unit: siUnit(dim), warnings: [unitMismatch(unitText, u.dim, dim)] }
  }
  return { factor: u.factor, unit: unitText, warnings: [] }
}

/** "SI units (J)"; a dimension without a name gets its compact form ("J²") rather than base units. */
function shownIn(dim: Dim | null): string {
  if (!dim || isDimensionless(dim)) return 'SI units'
  const si = quantityOf(dim) ? siUnit(dim) : compactUnit(dim)
  return si ? `SI units (${prettyUnit(si)})` : 'SI units'
}

/**
 * "the display unit nm is for a length, but the value is an energy: it is shown in SI units (J); choose a unit for
 * an energy, such as eV". Written only when the dimensions differ.
 */
function unitMismatch(unitText: string, unitDim: Dim, dim: Dim): string {
  const usual = usualUnit(dim)
  const advice = isDimensionless(dim)
    ? 'leave the unit empty or use %'
    : `choose a unit for ${dimPhrase(dim, false)}, such as ${prettyUnit(usual)}`
  return `the display unit ${unitText} is for ${dimPhrase(unitDim, false)}, but the value is ${dimPhrase(dim, false)}: it is shown in ${shownIn(dim)}; ${advice}`
}

const POW10 = Array.from({ length: 23 }, (_, k) => 10 ** k)

/**
 * Rounds to 15 significant digits, removing the last-bit noise of a unit conversion (500·1e-9 m shown in nm is
 * 500.00000000000006 before, 500 after). The change is at most 2 units in the last place of a double.
 */
export function clean(y: number): number {
  if (y === 0 || !Number.isFinite(y)) return y
  const e = Math.floor(Math.log10(Math.abs(y)))
  const k = 14 - e
  // 10^k is exact for 0 ≤ k ≤ 22, which makes round(y·10^k)/10^k the double nearest the rounded decimal
  if (k >= 0 && k <= 22) {
    const s = POW10[k]
    return Math.round(y * s) / s
  }
  return Number(y.toPrecision(15))
}

/**
 * A Num as JSON-ready numbers divided by `factor`; converted values are cleaned of conversion noise unless `raw`
 * (sweep tables, where hundreds of thousands of numbers go out at once).
 */
export function toJson(v: Num, factor: number, raw = false): number | number[] {
  if (typeof v === 'number') return factor === 1 ? v : raw ? v / factor : clean(v / factor)
  const out = new Array<number>(v.length)
  if (factor === 1) for (let i = 0; i < v.length; i++) out[i] = v[i]
  else if (raw) for (let i = 0; i < v.length; i++) out[i] = v[i] / factor
  else for (let i = 0; i < v.length; i++) out[i] = clean(v[i] / factor)
  return out
}

/** A warning when some values are not finite numbers (they show as null in JSON). */
export function nonFiniteWarning(v: Num): string | undefined {
  if (typeof v === 'number') {
    if (Number.isFinite(v)) return undefined
    return `the value is ${Number.isNaN(v) ? 'NaN (not a number)' : 'infinite'}${NON_FINITE_CAUSES}`
  }
  let bad = 0
  for (let i = 0; i < v.length; i++) if (!Number.isFinite(v[i])) bad++
  if (bad === 0) return undefined
  return `${bad.toLocaleString('en-US')} of ${v.length.toLocaleString('en-US')} values are not finite numbers (NaN or infinite)${NON_FINITE_CAUSES}`
}

const NON_FINITE_CAUSES = '; look for a division by zero, or a logarithm or square root of a value outside its range'
