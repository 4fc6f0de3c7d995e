/**
 * Transfer-matrix (characteristic-matrix) method for a stack of coherent layers between a transparent ambient and a
 * semi-infinite substrate, at normal or oblique incidence, for s- or p-polarised light. The core of filmReflectance /
 * filmTransmittance and of the multilayer stack cell (./stack).
 *
 * Convention (H. A. Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2): complex index N = n − ik with k ≥ 0
 * absorbing; tilted admittance η = N·cos θ (s) or N/cos θ (p), with N·cos θ = √(N² − n0²·sin²θ0) (Snell's law,
 * root with Im ≤ 0, so evanescent and absorbing waves decay); phase thickness δ = 2π·N·cos θ·d/λ; layer matrix
 * [[cos δ, i·sin δ/η], [i·η·sin δ, cos δ]]; [B, C] = M1…Mq·[1, ηs]; r = (η0·B − C)/(η0·B + C), R = |r|²,
 * T = 4·η0·Re(ηs)/|η0·B + C|². The net irradiance crossing the front of layer j is Re(Bj·Cj*) with [Bj, Cj] the product
 * from layer j down, so layer j absorbs the difference of the fluxes at its two faces.
 * Each layer matrix is divided by cosh(Im δ) and the scale kept as a logarithm, so thick absorbing layers give T → 0
 * instead of overflowing.
 */
import type { Num } from './num'
import { broadcastLength } from './num'
import { check, positive, nonNegative, rangeError } from './broadcast'

/** One coherent layer: refractive index n, extinction coefficient k (both dimensionless, Num), thickness d in m. */
export interface TmmLayer {
  n: Num
  k: Num
  d: Num
}

export interface TmmResult {
  /** Reflectance seen from the ambient, 0–1. */
  R: Num
  /** Transmittance into the substrate, 0–1. */
  T: Num
  /** Absorptance of the layers, 1 − R − T. */
  A: Num
  /** With `perLayer`: each layer's absorptance, in the order of `layers`; they add up to A. */
  layers?: Num[]
}

export interface TmmOptions {
  /** Angle of incidence in the ambient, rad, 0 ≤ angle < π/2 (default 0). */
  angle?: number
  /** 's' (TE) or 'p' (TM); at normal incidence both give the same numbers (default 's'). */
  polarization?: 's' | 'p'
  /** Extinction coefficient of the semi-infinite substrate (default 0, transparent). */
  kSub?: Num
  /** Also give each layer's absorptance. */
  perLayer?: boolean
}

/** One wavelength's layer data, filled by the caller; `flux` (length q + 1) receives the flux at each layer's front. */
export interface TmmPoint {
  /** Number of layers used (the arrays may be longer). */
  q: number
  n: Float64Array
  k: Float64Array
  d: Float64Array
  flux: Float64Array
  /** Scratch for the recursion: Re(Bj·Cj*) and the log scale at each layer (length q + 1). */
  re: Float64Array
  log: Float64Array
  R: number
  T: number
}

/** Scratch arrays for `q` layers. */
export function tmmPoint(q: number): TmmPoint {
  return {
    q, n: new Float64Array(q), k: new Float64Array(q), d: new Float64Array(q), flux: new Float64Array(q + 1),
    re: new Float64Array(q + 1), log: new Float64Array(q + 1), R: 0, T: 0,
  }
}

// complex results of the helpers below (one wavelength is solved at a time, so module scratch is safe)
let cRe = 0
let cIm = 0

/** √z with Im ≤ 0 (Macleod's decaying root), into cRe, cIm; z = x + iy with y ≤ 0 (k ≥ 0). */
function sqrtDecaying(x: number, y: number): void {
  const r = Math.hypot(x, y)
  if (x >= 0) {
    const re = Math.sqrt((r + x) / 2)
    cRe = re
    cIm = re === 0 ? 0 : y / (2 * re)
  } else {
    const im = -Math.sqrt((r - x) / 2)
    cIm = im
    cRe = y / (2 * im)
  }
}

/** Tilted admittance of a medium N = n − ik for the invariant s2 = (n0·sin θ0)²: into cRe, cIm (η = cRe + i·cIm); also ξ = N·cos θ. */
let xiRe = 0
let xiIm = 0
function admittance(n: number, k: number, s2: number, p: boolean): void {
  const n2Re = n * n - k * k
  const n2Im = -2 * n * k
  sqrtDecaying(n2Re - s2, n2Im)
  xiRe = cRe
  xiIm = cIm
  if (p) {
    // η = N²/ξ
    const m = xiRe * xiRe + xiIm * xiIm
    if (m === 0) throw rangeError('tmm', 'the light runs along a layer (grazing incidence): lower the angle')
    cRe = (n2Re * xiRe + n2Im * xiIm) / m
    cIm = (n2Im * xiRe - n2Re * xiIm) / m
  }
}

/**
 * Solves one wavelength: R and T into `pt`, and `pt.flux[j]` the fraction of the incident power crossing the front
 * of layer j (flux[0] = 1 − R, flux[q] = T), so layer j absorbs flux[j] − flux[j + 1].
 *
 * - `lam`: vacuum wavelength, m; `n0`: ambient index (real, > 0); `s2`: (n0·sin θ0)²; `p`: p-polarised
 * - `nSub`, `kSub`: substrate index and extinction coefficient (semi-infinite)
 *
 * Source: Macleod (2010), ch. 2 (characteristic matrix, tilted admittances, irradiance Re(B·C*)).
 */
export function solveTmmPoint(pt: TmmPoint, lam: number, n0: number, s2: number, p: boolean, nSub: number, kSub: number): void {
  const q = pt.q
  const cos0 = Math.sqrt(1 - s2 / (n0 * n0))
  const eta0 = p ? n0 / cos0 : n0 * cos0
  admittance(nSub, kSub, s2, p)
  const sRe0 = cRe
  let bRe = 1
  let bIm = 0
  let gRe = cRe
  let gIm = cIm
  let logScale = 0
  pt.re[q] = sRe0
  pt.log[q] = 0
  const f0 = (2 * Math.PI) / lam
  for (let j = q - 1; j >= 0; j--) {
    const n = pt.n[j]
    const k = pt.k[j]
    if (n === 0 && k === 0) throw rangeError('tmm', `layer ${j + 1} has a zero complex index`)
    admittance(n, k, s2, p)
    const eRe = cRe
    const eIm = cIm
    const f = f0 * pt.d[j]
    // δ = f·ξ = a − ib
    const a = f * xiRe
    const b = -f * xiIm
    const ab = Math.abs(b)
    const t = Math.tanh(b)
    // log cosh |b| without overflow
    logScale += ab + Math.log1p(Math.exp(-2 * ab)) - Math.LN2
    const ca = Math.cos(a)
    const sa = Math.sin(a)
    // cos δ / cosh b and i·sin δ / cosh b
    const cosRe = ca
    const cosIm = sa * t
    const isinRe = ca * t
    const isinIm = sa
    // i·sin δ / η and i·η·sin δ
    const m2 = eRe * eRe + eIm * eIm
    const pRe = (isinRe * eRe + isinIm * eIm) / m2
    const pIm = (isinIm * eRe - isinRe * eIm) / m2
    const sRe = isinRe * eRe - isinIm * eIm
    const sIm = isinRe * eIm + isinIm * eRe
    const nbRe = cosRe * bRe - cosIm * bIm + (pRe * gRe - pIm * gIm)
    const nbIm = cosRe * bIm + cosIm * bRe + (pRe * gIm + pIm * gRe)
    const ncRe = sRe * bRe - sIm * bIm + (cosRe * gRe - cosIm * gIm)
    const ncIm = sRe * bIm + sIm * bRe + (cosRe * gIm + cosIm * gRe)
    bRe = nbRe
    bIm = nbIm
    gRe = ncRe
    gIm = ncIm
    pt.re[j] = bRe * gRe + bIm * gIm
    pt.log[j] = logScale
  }
  const dRe = eta0 * bRe + gRe
  const dIm = eta0 * bIm + gIm
  const uRe = eta0 * bRe - gRe
  const uIm = eta0 * bIm - gIm
  const den = dRe * dRe + dIm * dIm
  const scale = (4 * eta0) / den
  pt.R = (uRe * uRe + uIm * uIm) / den
  for (let j = 0; j <= q; j++) pt.flux[j] = scale * pt.re[j] * Math.exp(-2 * (logScale - pt.log[j]))
  pt.T = pt.flux[q]
}

const el = (x: Num, i: number): number => (typeof x === 'number' ? x : x[i])

/**
 * Reflectance, transmittance and absorptance of a coherent multilayer (layers listed from the ambient side to the
 * substrate side), at normal or oblique incidence, for s- or p-polarised light.
 *
 * - `lambda`: vacuum wavelength, m (> 0)
 * - `layers`: [{ n, k, d }], n and k dimensionless (k ≥ 0 absorbing), d in m (≥ 0); an empty list is the bare
 *   ambient/substrate interface
 * - `n0`: ambient index (> 0, transparent); `nSub`: substrate index (> 0, semi-infinite: no back face)
 * - `options`: angle (rad, 0 ≤ angle < π/2), polarization 's' | 'p', kSub (substrate extinction), perLayer
 * - result: { R, T, A } as fractions (and `layers`, each layer's absorptance); each is a number when every input is a
 *   scalar, else a Float64Array
 *
 * Source: Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2 (characteristic matrix; tilted admittances at
 * oblique incidence; R, T, irradiance); M. Born, E. Wolf, Principles of Optics, 7th ed., §1.6.
 *
 * @example tmm(550e-9, [{ n: 1.38, k: 0, d: 550e-9 / (4·1.38) }], 1, 1.52) (MgF₂ quarter wave on glass)
 *   → R = ((1.52 − 1.38²)/(1.52 + 1.38²))² = 0.0126008, T = 0.987399, A = 0 (to rounding);
 *   tmm(600e-9, [], 1, 1.5, { angle: atan(1.5), polarization: 'p' }) (Brewster's angle) → R = 0
 */
export function tmm(lambda: Num, layers: TmmLayer[], n0: Num, nSub: Num, options: TmmOptions = {}): TmmResult {
  const angle = options.angle ?? 0
  const kSub = options.kSub ?? 0
  check('tmm', 'the wavelength', lambda, positive, 'positive')
  check('tmm', 'the ambient index n0', n0, positive, 'positive')
  check('tmm', 'the substrate index', nSub, positive, 'positive')
  check('tmm', 'the substrate extinction coefficient', kSub, nonNegative, 'zero or positive')
  if (!(angle >= 0 && angle < Math.PI / 2)) throw rangeError('tmm', `the angle of incidence must be at least 0 and below 90° (got ${(angle * 180) / Math.PI}°)`)
  const args: Num[] = [lambda, n0, nSub, kSub]
  for (let j = 0; j < layers.length; j++) {
    const L = layers[j]
    check('tmm', `the thickness of layer ${j + 1}`, L.d, nonNegative, 'zero or positive')
    check('tmm', `the extinction coefficient of layer ${j + 1}`, L.k, nonNegative, 'zero or positive')
    args.push(L.n, L.k, L.d)
  }
  const len = broadcastLength(...args)
  const count = len < 0 ? 1 : len
  const q = layers.length
  const p = options.polarization === 'p'
  const sin0 = Math.sin(angle)
  const Rout = new Float64Array(count)
  const Tout = new Float64Array(count)
  const Aout = new Float64Array(count)
  const per = options.perLayer ? layers.map(() => new Float64Array(count)) : undefined
  const pt = tmmPoint(q)
  for (let i = 0; i < count; i++) {
    for (let j = 0; j < q; j++) {
      const L = layers[j]
      pt.n[j] = el(L.n, i)
      pt.k[j] = el(L.k, i)
      pt.d[j] = el(L.d, i)
    }
    const a0 = el(n0, i)
    solveTmmPoint(pt, el(lambda, i), a0, (a0 * sin0) ** 2, p, el(nSub, i), el(kSub, i))
    Rout[i] = pt.R
    Tout[i] = pt.T
    Aout[i] = Math.max(0, 1 - pt.R - pt.T)
    if (per) for (let j = 0; j < q; j++) per[j][i] = Math.max(0, pt.flux[j] - pt.flux[j + 1])
  }
  if (len < 0) return { R: Rout[0], T: Tout[0], A: Aout[0], layers: per?.map((a) => a[0]) }
  return { R: Rout, T: Tout, A: Aout, layers: per }
}

/**
 * Normal-incidence reflectance, transmittance and absorptance of a coherent multilayer on a transparent substrate:
 * `tmm` at angle 0.
 *
 * - `lambda`: vacuum wavelength, m (> 0); `layers`: [{ n, k, d }] (d in m); `n0`, `nSub`: ambient and substrate index
 * - result: { R, T, A } as fractions
 *
 * Source: as `tmm` (Macleod (2010) ch. 2).
 *
 * @example tmmNormal(550e-9, [{ n: 1.38, k: 0, d: 550e-9 / (4·1.38) }], 1, 1.52) → R = 0.0126008
 */
export function tmmNormal(lambda: Num, layers: TmmLayer[], n0: Num, nSub: Num): TmmResult {
  const { R, T, A } = tmm(lambda, layers, n0, nSub)
  return { R, T, A }
}
