/**
 * "Extract α" on a spectrum cell: the ordinary cells that turn a measured spectrum into an absorption coefficient —
 * a thickness parameter, α by one of four routes, and optionally the photon energy, a Tauc fit and a figure of α —
 * so that every step stays a formula a colleague can read, edit and review. Pure: the page inserts the cells in one
 * undoable change.
 *
 * Spectrum columns reach formulas in SI (`filmB.T` with unit % is a fraction), so the formulas need no unit factors.
 */
import type { Cell } from '../schema/sheet'

export type AlphaRoute = 'transmittance-reflectance' | 'transmittance-index' | 'absorbance' | 'substrate'

export interface AlphaRouteInfo {
  route: AlphaRoute
  label: string
  /** The formula as a reader sees it. */
  formula: string
  /** Where it holds and what it leaves in the data. */
  note: string
}

const INCOHERENT = 'Incoherent light is assumed: interference fringes of a thin film are not removed and show as ripples in α.'

/** The four routes, each with its formula and validity note (shown in the dialog and kept in the α cell's description). */
export const ALPHA_ROUTES: readonly AlphaRouteInfo[] = [
  {
    route: 'transmittance-reflectance',
    label: 'from T and R',
    formula: 'α = alpha_from_transmittance(T, R, d), the exact inverse of T = (1 − R)²·e^(−αd) / (1 − R²·e^(−2αd))',
    note: `${INCOHERENT} The measured R is taken as the reflectance of one face (common practice); this holds where the film absorbs strongly, while near transparency the rear face adds to the measured R.`,
  },
  {
    route: 'transmittance-index',
    label: 'from T, with R from a refractive index',
    formula: 'α = alpha_from_transmittance(T, reflectance(n, 0), d), R = ((n − 1)/(n + 1))² at normal incidence',
    note: `${INCOHERENT} R of one face comes from a constant refractive index n with k = 0: dispersion and the film's own absorption in R are neglected.`,
  },
  {
    route: 'absorbance',
    label: 'from absorbance',
    formula: 'α = alpha_from_absorbance(A, d) = ln(10)·A / d (Beer–Lambert)',
    note: `${INCOHERENT} All of the absorbance is taken as absorption in the film: reflection losses are not removed, so α is overestimated where the film absorbs weakly.`,
  },
  {
    route: 'substrate',
    label: 'with a substrate correction',
    formula: 'α = alpha_from_transmittance(T_film / T_substrate, 0, d) = −ln(T_film / T_substrate) / d, T_substrate interpolated onto the film\'s grid',
    note: `${INCOHERENT} For a film on a transparent substrate: dividing by the bare substrate's T removes the substrate's own losses; the film's extra reflection is neglected (R = 0 in the ratio).`,
  },
]

export type SpectralColumn = 'wavelength' | 'energy' | 'wavenumber'

export interface ExtractAlphaSpec {
  /** The spectrum cell's name. */
  spectrum: string
  /** Its spectral column and what that column measures. */
  x: { column: string; quantity: SpectralColumn }
  route: AlphaRoute
  thickness: { value: number; unit: string }
  /** Transmittance column (routes with T). */
  T?: string
  /** Reflectance column (transmittance-reflectance). */
  R?: string
  /** Refractive index for the face reflectance (transmittance-index). */
  n?: number
  /** Absorbance column, base 10 (absorbance). */
  A10?: string
  /** The bare substrate's spectrum: its name, spectral column (same quantity as the film's) and T column. */
  substrate?: { spectrum: string; x: string; T: string }
  /** Add a photon-energy cell and a Tauc fit of α against it, with this exponent (1/2 direct, 2 indirect). */
  tauc?: { r: number; from?: number; to?: number }
  /** Add a figure of α against photon energy (log α). */
  figure?: boolean
}

export interface ExtractAlphaPlan {
  cells: Cell[]
  /** The names given, for the page to point at. */
  names: { thickness: string; alpha: string; energy?: string; fit?: string }
}

/** `base` when free, else `base_2`, `base_3`, … (names at most 64 characters). */
function freeName(base: string, used: Set<string>): string {
  const stem = base.slice(0, 60)
  let name = stem
  for (let i = 2; used.has(name); i++) name = `${stem}_${i}`
  used.add(name)
  return name
}

function need(value: string | undefined, what: string): string {
  if (!value) throw new Error(`Choose the ${what}.`)
  return value
}

/** The energy formula of a spectral column in SI: λ → hc/λ, ν̃ (1/m) → hc·ν̃, E as it is. */
function energySource(col: string, quantity: SpectralColumn): string {
  if (quantity === 'energy') return col
  if (quantity === 'wavenumber') return `photon_energy(1 / ${col})`
  return `photon_energy(${col})`
}

/**
 * The cells of one extraction, named after the spectrum (`d_filmB`, `alpha_filmB`, `E_filmB`, `gap_filmB`, …) and
 * kept clear of the names in `taken`. Throws an Error with a plain sentence when a needed column is not chosen.
 */
export function extractAlphaCells(spec: ExtractAlphaSpec, taken: Iterable<string | undefined>): ExtractAlphaPlan {
  const used = new Set<string>()
  for (const n of taken) if (n) used.add(n)
  const s = spec.spectrum
  const col = (c: string) => `${s}.${c}`
  const info = ALPHA_ROUTES.find((r) => r.route === spec.route)
  if (!info) throw new Error(`Unknown way to α: ${spec.route}.`)
  if (!(spec.thickness.value > 0) || !Number.isFinite(spec.thickness.value)) throw new Error('The thickness must be a positive number.')

  const cells: Cell[] = []
  const d = freeName(`d_${s}`, used)
  cells.push({ kind: 'parameter', name: d, value: spec.thickness.value, unit: spec.thickness.unit, min: 0, description: `thickness of the film measured in ${s}` })

  let source: string
  switch (spec.route) {
    case 'transmittance-reflectance':
      source = `alpha_from_transmittance(${col(need(spec.T, 'transmittance column'))}, ${col(need(spec.R, 'reflectance column'))}, ${d})`
      break
    case 'transmittance-index': {
      if (!(typeof spec.n === 'number' && spec.n >= 1 && Number.isFinite(spec.n))) throw new Error('The refractive index must be a number of at least 1.')
      const n = freeName(`n_${s}`, used)
      const R = freeName(`R_${s}`, used)
      cells.push({ kind: 'parameter', name: n, value: spec.n, min: 1, max: 6, description: `refractive index of the film in ${s}, for the reflectance of one face` })
      cells.push({ kind: 'formula', name: R, source: `reflectance(${n}, 0)`, unit: '%', description: 'reflectance of one face at normal incidence, from the refractive index (k = 0)' })
      source = `alpha_from_transmittance(${col(need(spec.T, 'transmittance column'))}, ${R}, ${d})`
      break
    }
    case 'absorbance':
      source = `alpha_from_absorbance(${col(need(spec.A10, 'absorbance column'))}, ${d})`
      break
    case 'substrate': {
      const sub = spec.substrate
      if (!sub?.spectrum || !sub.x || !sub.T) throw new Error('Choose the bare substrate\'s spectrum and its transmittance column.')
      const ratio = freeName(`Trel_${s}`, used)
      cells.push({
        kind: 'formula',
        name: ratio,
        source: `${col(need(spec.T, 'transmittance column'))} / interpolate(${col(spec.x.column)}, ${sub.spectrum}.${sub.x}, ${sub.spectrum}.${sub.T})`,
        unit: '%',
        description: `T of the film in ${s} over T of the bare substrate ${sub.spectrum}, interpolated onto the film's grid (empty outside the substrate's range)`,
      })
      source = `alpha_from_transmittance(${ratio}, 0, ${d})`
      break
    }
  }
  const alpha = freeName(`alpha_${s}`, used)
  cells.push({ kind: 'formula', name: alpha, source, unit: '1/cm', description: `${info.formula}. ${info.note}` })

  const names: ExtractAlphaPlan['names'] = { thickness: d, alpha }
  if (spec.tauc || spec.figure) {
    const E = freeName(`E_${s}`, used)
    names.energy = E
    cells.push({ kind: 'formula', name: E, source: energySource(col(spec.x.column), spec.x.quantity), unit: 'eV', description: `photon energy of each point of ${s}` })
    if (spec.tauc) {
      const fit = freeName(`gap_${s}`, used)
      names.fit = fit
      cells.push({
        kind: 'fit', name: fit, method: 'tauc', x: E, y: alpha, r: spec.tauc.r, unit: 'eV',
        ...(spec.tauc.from !== undefined && spec.tauc.to !== undefined ? { from: spec.tauc.from, to: spec.tauc.to } : {}),
        description: 'Tauc band gap of the extracted α; drag across the Tauc plot to set the window on the straight part of the edge',
      })
    }
    if (spec.figure) {
      const fig = freeName(`fig_${alpha}`, used)
      cells.push({ kind: 'figure', name: fig, title: `α of ${s}`, traces: [{ x: E, y: alpha }], y: { scale: 'log' }, ...(names.fit ? { marks: [`${names.fit}.Eg`] } : {}) })
    }
  }
  return { cells, names }
}

/**
 * A first guess at what each column of a spectrum measures, from its declared quantity, else its name, else its unit
 * (the page marks these as guesses the person can change).
 */
export function guessColumnRole(name: string, column: { unit?: string; quantity?: string }): SpectralColumn | 'T' | 'R' | 'A10' | null {
  const q = (column.quantity ?? '').toLowerCase()
  const n = name.toLowerCase()
  const u = (column.unit ?? '').toLowerCase()
  const by = (text: string): SpectralColumn | 'T' | 'R' | 'A10' | null => {
    if (/^(wavelength|lambda|lam|wl|λ)/.test(text)) return 'wavelength'
    if (/^(energy|e|photon_?energy)$/.test(text)) return 'energy'
    if (/^(wavenumber|nu|k0)$/.test(text)) return 'wavenumber'
    if (/^(t|transmittance|trans|t_?pct|pct_?t)$/.test(text)) return 'T'
    if (/^(r|reflectance|refl|r_?pct|pct_?r)$/.test(text)) return 'R'
    if (/^(a10|abs|absorbance|od)$/.test(text)) return 'A10'
    return null
  }
  const fromQuantity = by(q)
  if (fromQuantity) return fromQuantity
  const fromName = by(n)
  if (fromName) return fromName
  if (['nm', 'um', 'µm', 'm', 'mm', 'cm'].includes(u)) return 'wavelength'
  if (['ev', 'mev', 'j'].includes(u)) return 'energy'
  if (['1/cm', 'cm^-1', 'cm-1', '1/m'].includes(u)) return 'wavenumber'
  return null
}
