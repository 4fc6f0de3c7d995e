/**
 * Display units as figures need them: scale factors to SI for the units a sheet commonly shows, the spectral
 * quantity an axis unit implies (energy, wavelength, wavenumber, frequency), and conversion of whole series between
 * units of one dimension (a scale factor) or between spectral quantities (E = hc/λ, ν̃ = 1/λ, ν = c/λ).
 *
 * This is a figure-side table: it only decides how to draw numbers the engine already computed in display units.
 */
import { c0, h, q } from '../optics/constants'

/**
 * hc/e in eV·nm: λ[nm] = HC_EV_NM / E[eV].
 * From the exact 2019 SI values of h, c and e (CODATA 2018 lists hc = 1.239 841 984… × 10⁻⁶ eV m).
 * Example: a 1.48 eV band gap lies at 1239.84198 / 1.48 = 837.73 nm.
 */
export const HC_EV_NM = ((h * c0) / q) * 1e9

export type Dimension =
  | 'energy'
  | 'length'
  | '1/length'
  | 'frequency'
  | 'time'
  | 'temperature'
  | 'fraction'
  | 'current density'
  | 'irradiance'
  | 'spectral irradiance'

export interface UnitInfo {
  /** The unit as written, normalised (µm → um, cm⁻¹ → cm^-1, whitespace removed). */
  unit: string
  dimension: Dimension
  /** SI value = display value × factor. */
  factor: number
}

const TABLE: Record<string, [Dimension, number]> = {
  J: ['energy', 1],
  eV: ['energy', q],
  meV: ['energy', q * 1e-3],
  keV: ['energy', q * 1e3],
  m: ['length', 1],
  cm: ['length', 1e-2],
  mm: ['length', 1e-3],
  um: ['length', 1e-6],
  nm: ['length', 1e-9],
  pm: ['length', 1e-12],
  Å: ['length', 1e-10],
  angstrom: ['length', 1e-10],
  '1/m': ['1/length', 1],
  'm^-1': ['1/length', 1],
  '1/cm': ['1/length', 1e2],
  'cm^-1': ['1/length', 1e2],
  'cm-1': ['1/length', 1e2],
  '1/mm': ['1/length', 1e3],
  'mm^-1': ['1/length', 1e3],
  '1/um': ['1/length', 1e6],
  'um^-1': ['1/length', 1e6],
  '1/nm': ['1/length', 1e9],
  'nm^-1': ['1/length', 1e9],
  Hz: ['frequency', 1],
  kHz: ['frequency', 1e3],
  MHz: ['frequency', 1e6],
  GHz: ['frequency', 1e9],
  THz: ['frequency', 1e12],
  PHz: ['frequency', 1e15],
  s: ['time', 1],
  ms: ['time', 1e-3],
  us: ['time', 1e-6],
  ns: ['time', 1e-9],
  ps: ['time', 1e-12],
  fs: ['time', 1e-15],
  K: ['temperature', 1],
  '%': ['fraction', 1e-2],
  '1': ['fraction', 1],
  'A/m^2': ['current density', 1],
  'mA/cm^2': ['current density', 10],
  'A/cm^2': ['current density', 1e4],
  'W/m^2': ['irradiance', 1],
  'mW/cm^2': ['irradiance', 10],
  'W/cm^2': ['irradiance', 1e4],
  'W/m^2/nm': ['spectral irradiance', 1e9],
  'W/m^2/m': ['spectral irradiance', 1],
  'W/m^3': ['spectral irradiance', 1],
}

/** Writes the usual spellings of one unit the same way: `µm`/`μm` → `um`, `cm⁻¹` → `cm^-1`, `m²` → `m^2`. */
export function normalizeUnit(unit: string): string {
  return unit
    .replace(/\s+/g, '')
    .replace(/[µμ]/g, 'u')
    .replace(/⁻¹/g, '^-1')
    .replace(/²/g, '^2')
    .replace(/³/g, '^3')
    .replace(/\*\*/g, '^')
}

/** What a display unit measures and its factor to SI, or undefined for a unit the figure table does not know. */
export function unitInfo(unit: string | undefined): UnitInfo | undefined {
  if (unit === undefined) return undefined
  const u = normalizeUnit(unit)
  const row = TABLE[u]
  return row ? { unit: u, dimension: row[0], factor: row[1] } : undefined
}

export type SpectralQuantity = 'energy' | 'wavelength' | 'wavenumber' | 'frequency'

/**
 * The spectral quantity an axis unit implies: eV → energy, nm → wavelength, 1/cm → wavenumber, THz → frequency;
 * null for any other unit. A 1/length unit is read as wavenumber: callers decide whether that axis is spectral
 * (an x axis in 1/cm is a wavenumber axis; a y axis in 1/cm is usually an absorption coefficient).
 */
export function spectralQuantity(unit: string | undefined): SpectralQuantity | null {
  const info = unitInfo(unit)
  if (!info) return null
  switch (info.dimension) {
    case 'energy':
      return 'energy'
    case 'length':
      return 'wavelength'
    case '1/length':
      return 'wavenumber'
    case 'frequency':
      return 'frequency'
    default:
      return null
  }
}

/** True when the unit is a wavelength unit (nm, um, Å, …). */
export function isWavelengthUnit(unit: string | undefined): boolean {
  return spectralQuantity(unit) === 'wavelength'
}

/** True when the unit is a photon-energy unit (eV, meV, J, …). */
export function isEnergyUnit(unit: string | undefined): boolean {
  return spectralQuantity(unit) === 'energy'
}

/** Photon energy in eV → vacuum wavelength in nm (λ = hc/E). Non-positive energies give NaN. 1.12 eV → 1107.0 nm. */
export function energyToWavelengthNm(eV: number): number {
  return eV > 0 ? HC_EV_NM / eV : NaN
}

/** Vacuum wavelength in nm → photon energy in eV (E = hc/λ). Non-positive wavelengths give NaN. 550 nm → 2.2543 eV. */
export function wavelengthNmToEnergy(nm: number): number {
  return nm > 0 ? HC_EV_NM / nm : NaN
}

export type Converted<T> = { ok: true; value: T } | { ok: false; message: string }

function describeUnit(unit: string | undefined): string {
  return unit === undefined || unit === '' ? 'no unit' : `"${unit}"`
}

/**
 * A converter from one display unit to another: identity for the same unit, a scale factor within one dimension,
 * and E ↔ λ ↔ ν̃ ↔ ν through hc for spectral units (so an eV series can be drawn on a nm axis). No unit is a plain
 * number, a fraction of one: converter('', '%') multiplies by 100.
 * Non-positive values have no image across spectral quantities and become NaN (a gap in the curve).
 */
export function converter(from: string | undefined, to: string | undefined): Converted<(x: number) => number> {
  const same = (from ?? '') === (to ?? '') || (from !== undefined && to !== undefined && normalizeUnit(from) === normalizeUnit(to))
  if (same) return { ok: true, value: (x) => x }
  // a plain number (no unit: the engine's dimensionless results, a stack's R, T and A) is a fraction of one, so it
  // draws on a % axis (0.25 → 25 %) and a % series on a plain axis
  const plain = (u: string | undefined) => (u === undefined || u.trim() === '' ? '1' : u)
  const a = unitInfo(plain(from))
  const b = unitInfo(plain(to))
  if (!a || !b) {
    const unknown = !a ? from : to
    return { ok: false, message: `cannot convert ${describeUnit(from)} to ${describeUnit(to)}: ${describeUnit(unknown)} is not a unit figures know how to convert` }
  }
  if (a.dimension === b.dimension) {
    const k = a.factor / b.factor
    return { ok: true, value: (x) => x * k }
  }
  const qa = spectralQuantity(a.unit)
  const qb = spectralQuantity(b.unit)
  if (qa && qb) {
    const toLambda = toWavelengthSI(qa, a.factor)
    const fromLambda = fromWavelengthSI(qb, b.factor)
    return { ok: true, value: (x) => fromLambda(toLambda(x)) }
  }
  return { ok: false, message: `cannot convert ${describeUnit(from)} (${a.dimension}) to ${describeUnit(to)} (${b.dimension})` }
}

function toWavelengthSI(quantity: SpectralQuantity, factor: number): (x: number) => number {
  const hc = h * c0
  switch (quantity) {
    case 'wavelength':
      return (x) => x * factor
    case 'energy':
      return (x) => (x > 0 ? hc / (x * factor) : NaN)
    case 'wavenumber':
      return (x) => (x > 0 ? 1 / (x * factor) : NaN)
    case 'frequency':
      return (x) => (x > 0 ? c0 / (x * factor) : NaN)
  }
}

function fromWavelengthSI(quantity: SpectralQuantity, factor: number): (lambda: number) => number {
  const hc = h * c0
  switch (quantity) {
    case 'wavelength':
      return (l) => l / factor
    case 'energy':
      return (l) => (l > 0 ? hc / l / factor : NaN)
    case 'wavenumber':
      return (l) => (l > 0 ? 1 / l / factor : NaN)
    case 'frequency':
      return (l) => (l > 0 ? c0 / l / factor : NaN)
  }
}

/** Converts a whole series (see `converter`); the input is not changed. */
export function convertValues(values: readonly number[], from: string | undefined, to: string | undefined): Converted<number[]> {
  const c = converter(from, to)
  if (!c.ok) return c
  const f = c.value
  const out = new Array<number>(values.length)
  for (let i = 0; i < values.length; i++) out[i] = f(values[i])
  return { ok: true, value: out }
}

/** True when a series in `from` can be drawn on an axis in `to`. */
export function canConvert(from: string | undefined, to: string | undefined): boolean {
  return converter(from, to).ok
}

/**
 * A unit as typeset on an axis: `1/cm` and `cm^-1` → `cm⁻¹`, `um` → `µm`, `mA/cm^2` → `mA/cm²`, `W/m^2/nm` → `W m⁻² nm⁻¹`.
 */
export function prettyUnit(unit: string | undefined): string {
  if (!unit) return ''
  let u = normalizeUnit(unit)
  const reciprocal = /^1\/([A-Za-zÅ]+)$/.exec(u)
  if (reciprocal) u = `${reciprocal[1]}^-1`
  if (/^[A-Za-z]+\/[A-Za-z]+\^?\d*\/[A-Za-z]+$/.test(u)) {
    // W/m^2/nm: a product with negative powers reads more clearly than two slashes
    const [num, den1, den2] = u.split('/')
    const p = /^([A-Za-z]+)\^?(\d*)$/.exec(den1)
    const den1Pow = p ? `${p[1]}^-${p[2] || '1'}` : `${den1}^-1`
    u = `${num} ${den1Pow} ${den2}^-1`
  }
  return u
    .replace(/\bu(m|s)\b/g, 'µ$1')
    .replace(/\^-1\b/g, '⁻¹')
    .replace(/\^-2\b/g, '⁻²')
    .replace(/\^-3\b/g, '⁻³')
    .replace(/\^2\b/g, '²')
    .replace(/\^3\b/g, '³')
}

const SPECTRAL_CHOICES = ['eV', 'meV', 'nm', 'um', '1/cm', 'THz']

/**
 * Display units an axis now in `unit` can switch to: every spectral unit for a spectral axis (eV ↔ nm ↔ 1/cm), the
 * units of the same dimension otherwise; empty for units the table does not know.
 */
export function unitChoices(unit: string | undefined): string[] {
  const info = unitInfo(unit)
  if (!info) return []
  if (spectralQuantity(info.unit) && info.dimension !== '1/length') return SPECTRAL_CHOICES
  if (info.dimension === '1/length') return ['1/cm', '1/m', '1/um', ...SPECTRAL_CHOICES.filter((u) => u !== '1/cm')]
  const same = Object.entries(TABLE)
    .filter(([u, [d]]) => d === info.dimension && !u.includes('^-1') && u !== 'cm-1' && u !== 'angstrom' && u !== 'W/m^3')
    .map(([u]) => u)
  return same
}
