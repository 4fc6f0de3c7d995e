/**
 * Physical dimensions as exponent vectors over the SI base units (m, kg, s, A, K, mol, cd), with plain names for
 * display ("energy", "1/length", …). Radians and steradians count as dimensionless, as in the SI brochure (9th ed.,
 * 2019, §2.3.3).
 */

/** Exponents of m, kg, s, A, K, mol, cd. */
export type Dim = readonly [number, number, number, number, number, number, number]

export const BASE_SYMBOLS = ['m', 'kg', 's', 'A', 'K', 'mol', 'cd'] as const

export const DIMENSIONLESS: Dim = [0, 0, 0, 0, 0, 0, 0]
export const LENGTH: Dim = [1, 0, 0, 0, 0, 0, 0]
export const INV_LENGTH: Dim = [-1, 0, 0, 0, 0, 0, 0]
export const AREA: Dim = [2, 0, 0, 0, 0, 0, 0]
export const MASS: Dim = [0, 1, 0, 0, 0, 0, 0]
export const TIME: Dim = [0, 0, 1, 0, 0, 0, 0]
export const FREQUENCY: Dim = [0, 0, -1, 0, 0, 0, 0]
export const CURRENT: Dim = [0, 0, 0, 1, 0, 0, 0]
export const TEMPERATURE: Dim = [0, 0, 0, 0, 1, 0, 0]
export const ENERGY: Dim = [2, 1, -2, 0, 0, 0, 0]
export const POWER: Dim = [2, 1, -3, 0, 0, 0, 0]
export const CHARGE: Dim = [0, 0, 1, 1, 0, 0, 0]
export const CURRENT_DENSITY: Dim = [-2, 0, 0, 1, 0, 0, 0]
export const VOLTAGE: Dim = [2, 1, -3, -1, 0, 0, 0]
/** Energy per kelvin (Varshni's α, Boltzmann's constant). */
export const ENERGY_PER_TEMPERATURE: Dim = [2, 1, -2, 0, -1, 0, 0]
/** Spectral photon flux per unit wavelength: photons m⁻² s⁻¹ m⁻¹. */
export const SPECTRAL_PHOTON_FLUX: Dim = [-3, 0, -1, 0, 0, 0, 0]
/** Spectral irradiance per unit wavelength: W m⁻² m⁻¹. */
export const SPECTRAL_IRRADIANCE: Dim = [-1, 1, -3, 0, 0, 0, 0]

const NAMED: [string, Dim][] = [
  ['dimensionless', DIMENSIONLESS],
  ['length', LENGTH],
  ['1/length', INV_LENGTH],
  ['area', AREA],
  ['volume', [3, 0, 0, 0, 0, 0, 0]],
  ['1/area', [-2, 0, 0, 0, 0, 0, 0]],
  ['mass', MASS],
  ['time', TIME],
  ['frequency', FREQUENCY],
  ['current', CURRENT],
  ['temperature', TEMPERATURE],
  ['amount', [0, 0, 0, 0, 0, 1, 0]],
  ['luminous intensity', [0, 0, 0, 0, 0, 0, 1]],
  ['energy', ENERGY],
  ['1/energy', [-2, -1, 2, 0, 0, 0, 0]],
  ['power', POWER],
  ['charge', CHARGE],
  ['voltage', [2, 1, -3, -1, 0, 0, 0]],
  ['velocity', [1, 0, -1, 0, 0, 0, 0]],
  ['action', [2, 1, -1, 0, 0, 0, 0]],
  ['permittivity', [-3, -1, 4, 2, 0, 0, 0]],
  ['current density', CURRENT_DENSITY],
  ['irradiance', [0, 1, -3, 0, 0, 0, 0]],
  ['spectral irradiance', SPECTRAL_IRRADIANCE],
  ['photon flux', [-2, 0, -1, 0, 0, 0, 0]],
  ['spectral photon flux', SPECTRAL_PHOTON_FLUX],
  ['energy/area', [0, 1, -2, 0, 0, 0, 0]],
  ['energy/temperature', ENERGY_PER_TEMPERATURE],
  ['1/temperature', [0, 0, 0, 0, -1, 0, 0]],
  ['energy·length', [3, 1, -2, 0, 0, 0, 0]],
]

const EPS = 1e-9

export function dimEquals(a: Dim, b: Dim): boolean {
  for (let i = 0; i < 7; i++) if (Math.abs(a[i] - b[i]) > EPS) return false
  return true
}

export function isDimensionless(a: Dim): boolean {
  return dimEquals(a, DIMENSIONLESS)
}

export function dimMul(a: Dim, b: Dim): Dim {
  return a.map((x, i) => x + b[i]) as unknown as Dim
}

export function dimDiv(a: Dim, b: Dim): Dim {
  return a.map((x, i) => x - b[i]) as unknown as Dim
}

export function dimPow(a: Dim, p: number): Dim {
  return a.map((x) => clean(x * p)) as unknown as Dim
}

/** Rounds exponents that are integers or halves up to floating-point noise (from √ of a power, say). */
function clean(x: number): number {
  const r = Math.round(x * 2) / 2
  return Math.abs(r - x) < EPS ? r + 0 : x
}

/** "m^2·kg·s^-2" for a dimension without a plain name. */
export function dimSymbols(a: Dim): string {
  const parts: string[] = []
  a.forEach((e, i) => {
    if (Math.abs(e) < EPS) return
    parts.push(e === 1 ? BASE_SYMBOLS[i] : `${BASE_SYMBOLS[i]}^${+e.toFixed(6)}`)
  })
  return parts.length ? parts.join('·') : '1'
}

/**
 * The plain name of a dimension ("energy", "1/length"), or its base-unit form when it has none: the `dimension` of a
 * result. Messages describe dimensions in words and usual units instead (describe.ts).
 */
export function dimName(a: Dim): string {
  for (const [name, d] of NAMED) if (dimEquals(a, d)) return name
  return dimSymbols(a)
}

/** Looks a dimension up by its plain name ("energy"), for declarations in the function registry. */
export function namedDim(name: string): Dim {
  for (const [n, d] of NAMED) if (n === name) return d
  throw new Error(`no dimension named ${name}`)
}
