/**
 * How numbers and dimensions read in the engine's messages (the errors and warnings shown under a cell): numbers
 * rounded to a few significant digits, dimensions named as the physical quantity with the unit a researcher would
 * write ("energy (eV)", "inverse length (1/cm)"), and a compact unit expression ("J²", "J/m²") for dimensions
 * without a name.
 *
 * Everything here runs only while a message is being written, never while values are computed. Units are read with
 * the engine's own unit parser (js-quantities underneath), and quantity names beyond the engine's own come from
 * js-quantities' kinds, so there is one unit system.
 *
 * Characters: the shipped Fira subsets (latin) have "·", "²", "³", "µ", "…" and "−" but no superscript minus or
 * superscripts above 3, so negative powers are written with "/" (`1/cm`, `W/(m²·nm)`) and powers above 3 as `^4`.
 */
import Qty from 'js-quantities'
import { formatNumber as formatPlain } from '../plot/format'
import { BASE_SYMBOLS, dimDiv, dimEquals, dimName, dimPow, isDimensionless, type Dim } from './dimensions'
import { parseUnit } from './units'

/** Significant digits of computed values in messages. */
export const MESSAGE_DIGITS = 4
/** Significant digits when a message repeats a number typed into the sheet, so it reads as typed (1.5005 stays so). */
export const INPUT_DIGITS = 6

/**
 * A number for a message: `digits` significant figures without trailing zeros, exponent form (`1.2e-19`, as typed in
 * formulas) below 0.001 and from 100,000 up; "NaN", "infinity" and "-infinity" for non-finite values.
 * Example: formatNumber(2.3000000000000003) → "2.3"; formatNumber(1.602176634e-19) → "1.602e-19".
 */
export function formatNumber(x: number, digits: number = MESSAGE_DIGITS): string {
  if (Number.isNaN(x)) return 'NaN'
  if (x === Infinity) return 'infinity'
  if (x === -Infinity) return '-infinity'
  return formatPlain(x, digits)
}

/**
 * Two numbers a message compares ("the value 1.4996 is below the minimum 1.5"), with as many digits as it takes to
 * tell them apart (at least `digits`, at most 15).
 */
export function formatPair(a: number, b: number, digits: number = INPUT_DIGITS): [string, string] {
  let d = digits
  let pair: [string, string] = [formatNumber(a, d), formatNumber(b, d)]
  while (a !== b && pair[0] === pair[1] && d < 15) {
    d++
    pair = [formatNumber(a, d), formatNumber(b, d)]
  }
  return pair
}

interface Quantity {
  /** "energy", "inverse length" */
  noun: string
  /** The unit researchers usually write it in, parseable by parseUnit: `eV`, `1/cm`, `W/(m^2*nm)`. */
  unit?: string
}

/**
 * Words and usual units of the engine's named dimensions (dimensions.ts), keyed by their result name. A unit here is
 * checked against the dimension by the unit parser in the tests, so a wrong entry cannot slip in.
 */
const QUANTITIES: Record<string, Quantity> = {
  dimensionless: { noun: 'dimensionless number' },
  length: { noun: 'length', unit: 'nm' },
  '1/length': { noun: 'inverse length', unit: '1/cm' },
  area: { noun: 'area', unit: 'cm^2' },
  volume: { noun: 'volume', unit: 'cm^3' },
  '1/area': { noun: 'inverse area', unit: '1/cm^2' },
  mass: { noun: 'mass', unit: 'kg' },
  time: { noun: 'time', unit: 's' },
  frequency: { noun: 'frequency', unit: 'Hz' },
  current: { noun: 'current', unit: 'A' },
  temperature: { noun: 'temperature', unit: 'K' },
  amount: { noun: 'amount of substance', unit: 'mol' },
  'luminous intensity': { noun: 'luminous intensity', unit: 'cd' },
  energy: { noun: 'energy', unit: 'eV' },
  '1/energy': { noun: 'inverse energy', unit: '1/eV' },
  power: { noun: 'power', unit: 'W' },
  charge: { noun: 'charge', unit: 'C' },
  voltage: { noun: 'voltage', unit: 'V' },
  velocity: { noun: 'velocity', unit: 'm/s' },
  action: { noun: 'energy × time', unit: 'J*s' },
  permittivity: { noun: 'permittivity', unit: 'F/m' },
  'current density': { noun: 'current density', unit: 'mA/cm^2' },
  irradiance: { noun: 'irradiance', unit: 'W/m^2' },
  'spectral irradiance': { noun: 'spectral irradiance', unit: 'W/(m^2*nm)' },
  'photon flux': { noun: 'photon flux', unit: '1/(m^2*s)' },
  'spectral photon flux': { noun: 'spectral photon flux', unit: '1/(m^2*s*nm)' },
  'energy/area': { noun: 'energy per area', unit: 'J/m^2' },
  'energy/temperature': { noun: 'energy per temperature', unit: 'eV/K' },
  '1/temperature': { noun: 'inverse temperature', unit: '1/K' },
  'energy·length': { noun: 'energy × length', unit: 'eV*nm' },
}

/** js-quantities kinds worth naming in a message, with their SI unit; other kinds (yank, jolt …) are left unnamed. */
const QTY_KINDS: Record<string, Quantity> = {
  force: { noun: 'force', unit: 'N' },
  pressure: { noun: 'pressure', unit: 'Pa' },
  resistance: { noun: 'resistance', unit: 'ohm' },
  conductance: { noun: 'conductance', unit: 'S' },
  capacitance: { noun: 'capacitance', unit: 'F' },
  inductance: { noun: 'inductance', unit: 'H' },
  density: { noun: 'density', unit: 'kg/m^3' },
  acceleration: { noun: 'acceleration', unit: 'm/s^2' },
  momentum: { noun: 'momentum', unit: 'kg*m/s' },
}

/** The dimension as js-quantities base units ("1 kg*m^2/s^2"), for its kind; it reads everything after "/" as below. */
function baseQuantityText(dim: Dim): string {
  const up = dim.flatMap((e, i) => (e > 0 ? [`${BASE_SYMBOLS[i]}^${e}`] : []))
  const down = dim.flatMap((e, i) => (e < 0 ? [`${BASE_SYMBOLS[i]}^${-e}`] : []))
  return `1 ${up.join('*')}${down.length ? `/${down.join('*')}` : ''}`
}

const known = new Map<string, Quantity | null>()

/** What a dimension is called and the unit it is usually written in, or null when it has no name. */
export function quantityOf(dim: Dim): Quantity | null {
  const key = dim.join(',')
  const hit = known.get(key)
  if (hit !== undefined) return hit
  let q: Quantity | null = QUANTITIES[dimName(dim)] ?? null
  if (!q && dim.every((e) => Number.isInteger(e))) {
    const kind = Qty.parse(baseQuantityText(dim))?.kind()
    q = kind && Object.hasOwn(QTY_KINDS, kind) ? QTY_KINDS[kind] : null
  }
  known.set(key, q)
  return q
}

/** SI units a compact expression may use for a dimension without a name: a derived unit, then base units. */
const DERIVED = ['J', 'W', 'V', 'C']

/**
 * A compact SI unit expression for any dimension, parseable by parseUnit: `J^2` for an energy squared, `J/m^2`,
 * `1/(m^2*s)`. One derived unit (J, W, V or C) to a whole or half power may stand in for its base units when that
 * leaves fewer and smaller exponents; kilograms are avoided where a derived unit absorbs them.
 * Example: compactUnit(energy²) → "J^2"; compactUnit(energy·time²) → "J*s^2".
 */
export function compactUnit(dim: Dim): string {
  if (isDimensionless(dim)) return '1'
  let best = { cost: cost(dim, 0), derived: '', power: 0, rest: dim }
  for (const name of DERIVED) {
    const u = parseUnit(name)
    if (!u.ok) continue
    for (let p = -4; p <= 4; p += 0.5) {
      if (p === 0) continue
      const rest = dimDiv(dim, dimPow(u.dim, p))
      const c = cost(rest, p)
      if (c < best.cost) best = { cost: c, derived: name, power: p, rest }
    }
  }
  const factors: [string, number][] = []
  if (best.derived) factors.push([best.derived, best.power])
  best.rest.forEach((e, i) => {
    if (Math.abs(e) > 1e-9) factors.push([BASE_SYMBOLS[i], +e.toFixed(6)])
  })
  const power = (s: string, e: number): string => (e === 1 ? s : `${s}^${e}`)
  const up = factors.filter(([, e]) => e > 0).map(([s, e]) => power(s, e))
  const down = factors.filter(([, e]) => e < 0).map(([s, e]) => power(s, -e))
  const top = up.length ? up.join('*') : '1'
  if (!down.length) return top
  return `${top}/${down.length === 1 ? down[0] : `(${down.join('*')})`}`
}

/**
 * How hard a factorisation is to read: factors first, then the size of the exponents; kilograms and half powers
 * count extra (J^0.5·kg^0.5 is no way to write a momentum).
 */
function cost(rest: Dim, derivedPower: number): number {
  let factors = derivedPower ? 1 : 0
  let size = Math.abs(derivedPower) + (Number.isInteger(derivedPower) ? 0 : 3)
  rest.forEach((e, i) => {
    if (Math.abs(e) < 1e-9) return
    factors++
    size += Math.abs(e) + (BASE_SYMBOLS[i] === 'kg' ? 2 : 0) + (Number.isInteger(e) ? 0 : 3)
  })
  return factors * 10 + size
}

/**
 * A unit as it reads in a message: `*` → `·`, `^2` → `²`, `^3` → `³`, `um` → `µm`; other powers stay `^4`.
 * Example: prettyUnit('W/(m^2*nm)') → "W/(m²·nm)".
 */
export function prettyUnit(unit: string): string {
  return unit
    .replace(/\*/g, '·')
    .replace(/\^2(?![\d.])/g, '²')
    .replace(/\^3(?![\d.])/g, '³')
    .replace(/\bu(m|s|A|W|J|V)\b/g, 'µ$1')
}

/** The usual unit of a dimension (`eV`, `1/cm`, `W/(m^2*nm)`), else a compact SI expression; '' for dimensionless. */
export function usualUnit(dim: Dim): string {
  if (isDimensionless(dim)) return ''
  return quantityOf(dim)?.unit ?? compactUnit(dim)
}

/**
 * A dimension for a message, without article: "energy (eV)", "inverse length (1/cm)", "dimensionless number",
 * "a quantity in J²". `withUnit: false` leaves the unit out ("energy").
 */
export function dimNoun(dim: Dim, withUnit = true): string {
  const q = quantityOf(dim)
  if (!q) return `a quantity in ${prettyUnit(compactUnit(dim))}`
  return withUnit && q.unit ? `${q.noun} (${prettyUnit(q.unit)})` : q.noun
}

/** As dimNoun, with an article: "an energy (eV)", "a length (nm)", "a dimensionless number", "a quantity in J²". */
export function dimPhrase(dim: Dim, withUnit = true): string {
  const noun = dimNoun(dim, withUnit)
  if (noun.startsWith('a quantity in ')) return noun
  return /^[aeiou]/.test(noun) ? `an ${noun}` : `a ${noun}`
}

/**
 * An SI value of dimension `dim` in its usual unit, for a message: 2.4e-19 J → "1.498 eV", 8.5e-7 m → "850 nm",
 * a dimensionless 0.25 → "0.25". Without a dimension the bare number is given.
 */
export function formatQuantity(si: number, dim: Dim | null, digits: number = MESSAGE_DIGITS): string {
  if (!dim || isDimensionless(dim)) return formatNumber(si, digits)
  const unit = usualUnit(dim)
  const u = parseUnit(unit)
  if (!u.ok || !dimEquals(u.dim, dim)) return formatNumber(si, digits)
  return `${formatNumber(si / u.factor, digits)} ${prettyUnit(unit)}`
}

/** True when the two dimensions are an energy and a length, in either order (photon_energy converts between them). */
export function energyAndLength(a: Dim, b: Dim): boolean {
  const names = new Set([dimName(a), dimName(b)])
  return names.has('energy') && names.has('length')
}
