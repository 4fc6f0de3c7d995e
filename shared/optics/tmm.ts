/**
 * Transfer-matrix (characteristic-matrix) method at normal incidence for a stack of coherent layers between a
 * transparent ambient and a transparent semi-infinite substrate. The core of filmReflectance / filmTransmittance and
 * of the multilayer stack cell.
 *
 * Convention (H. A. Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2): complex index N = n − ik with k ≥ 0
 * absorbing; phase thickness δ = 2πNd/λ; layer matrix [[cos δ, i·sin δ/N], [i·N·sin δ, cos δ]]; [B, C] = M1…Mq·[1, ns];
 * r = (n0·B − C)/(n0·B + C), R = |r|², T = 4·n0·ns/|n0·B + C|², A = 1 − R − T (absorbed in the stack).
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
}

const el = (x: Num, i: number): number => (typeof x === 'number' ? x : x[i])

/**
 * Normal-incidence reflectance, transmittance and absorptance of a coherent multilayer (layers listed from the
 * ambient side to the substrate side).
 *
 * - `lambda`: vacuum wavelength, m (> 0)
 * - `layers`: [{ n, k, d }], n and k dimensionless (k ≥ 0 absorbing), d in m (≥ 0); an empty list is the bare
 *   ambient/substrate interface
 * - `n0`: ambient index (> 0, transparent); `nSub`: substrate index (> 0, transparent, semi-infinite: no back face)
 * - result: { R, T, A } as fractions; each is a number when every input is a scalar, else a Float64Array
 *
 * Source: Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2 (characteristic matrix; admittance Y, R, T);
 * M. Born, E. Wolf, Principles of Optics, 7th ed., §1.6.
 *
 * @example tmmNormal(550e-9, [{ n: 1.38, k: 0, d: 550e-9 / (4·1.38) }], 1, 1.52) (MgF₂ quarter wave on glass)
 *   → R = ((1.52 − 1.38²)/(1.52 + 1.38²))² = 0.0126008, T = 0.987399, A = 0 (to rounding)
 */
export function tmmNormal(lambda: Num, layers: TmmLayer[], n0: Num, nSub: Num): TmmResult {
  check('tmm', 'the wavelength', lambda, positive, 'positive')
  check('tmm', 'the ambient index n0', n0, positive, 'positive')
  check('tmm', 'the substrate index', nSub, positive, 'positive')
  const args: Num[] = [lambda, n0, nSub]
  for (let j = 0; j < layers.length; j++) {
    const L = layers[j]
    check('tmm', `the thickness of layer ${j + 1}`, L.d, nonNegative, 'zero or positive')
    args.push(L.n, L.k, L.d)
  }
  const len = broadcastLength(...args)
  const count = len < 0 ? 1 : len
  const q = layers.length
  const Rout = new Float64Array(count)
  const Tout = new Float64Array(count)
  const Aout = new Float64Array(count)
  const TWO_PI = 2 * Math.PI
  for (let i = 0; i < count; i++) {
    const lam = el(lambda, i)
    const a0 = el(n0, i)
    const ns = el(nSub, i)
    // [B, C] starts as [1, ns] at the substrate and is multiplied by the layer matrices from the last layer up.
    let bRe = 1
    let bIm = 0
    let cRe = ns
    let cIm = 0
    let logScale = 0
    for (let j = q - 1; j >= 0; j--) {
      const L = layers[j]
      const n = el(L.n, i)
      const k = el(L.k, i)
      const d = el(L.d, i)
      const f = (TWO_PI * d) / lam
      const a = f * n
      const b = f * k
      const ab = Math.abs(b)
      const t = Math.tanh(b)
      // log cosh |b| without overflow
      logScale += ab + Math.log1p(Math.exp(-2 * ab)) - Math.LN2
      const ca = Math.cos(a)
      const sa = Math.sin(a)
      // cos δ / cosh b and i·sin δ / cosh b, for δ = a − ib
      const cosRe = ca
      const cosIm = sa * t
      const isinRe = ca * t
      const isinIm = sa
      // N = n − ik; i·sin δ / N = isin · (n + ik)/(n² + k²); i·N·sin δ = isin · (n − ik)
      const m2 = n * n + k * k
      if (m2 === 0) throw rangeError('tmm', `layer ${j + 1} has a zero complex index`)
      const pRe = (isinRe * n - isinIm * k) / m2
      const pIm = (isinRe * k + isinIm * n) / m2
      const sRe = isinRe * n + isinIm * k
      const sIm = isinIm * n - isinRe * k
      const nbRe = cosRe * bRe - cosIm * bIm + (pRe * cRe - pIm * cIm)
      const nbIm = cosRe * bIm + cosIm * bRe + (pRe * cIm + pIm * cRe)
      const ncRe = sRe * bRe - sIm * bIm + (cosRe * cRe - cosIm * cIm)
      const ncIm = sRe * bIm + sIm * bRe + (cosRe * cIm + cosIm * cRe)
      bRe = nbRe
      bIm = nbIm
      cRe = ncRe
      cIm = ncIm
    }
    const dRe = a0 * bRe + cRe
    const dIm = a0 * bIm + cIm
    const uRe = a0 * bRe - cRe
    const uIm = a0 * bIm - cIm
    const den = dRe * dRe + dIm * dIm
    const R = (uRe * uRe + uIm * uIm) / den
    const T = ((4 * a0 * ns) / den) * Math.exp(-2 * logScale)
    Rout[i] = R
    Tout[i] = T
    Aout[i] = Math.max(0, 1 - R - T)
  }
  if (len < 0) return { R: Rout[0], T: Tout[0], A: Aout[0] }
  return { R: Rout, T: Tout, A: Aout }
}
