/**
 * A multilayer stack as the stack cell models it: coherent thin layers (transfer matrix, ./tmm) on a substrate that
 * is either semi-infinite, a coherent layer, or a thick slab whose two faces add by intensity (incoherent), at normal
 * or oblique incidence, for s-, p- or unpolarised light, with the absorptance of every layer and of the substrate.
 *
 * The medium behind a substrate of finite thickness is the ambient again (a film on a glass slide in air).
 */
import type { Num } from './num'
import { broadcastLength } from './num'
import { check, positive, nonNegative, rangeError } from './broadcast'
import { solveTmmPoint, tmmPoint, type TmmLayer, type TmmPoint } from './tmm'

export type StackPolarization = 's' | 'p' | 'unpolarized'

export interface StackSubstrate {
  /** Refractive index and extinction coefficient (dimensionless, k ≥ 0). */
  n: Num
  k: Num
  /** Thickness, m; omitted: semi-infinite (T is the light that enters it). */
  d?: number
  /** With a thickness: true adds it as one more coherent layer, false (the usual case) sums its faces by intensity. */
  coherent?: boolean
}

export interface StackResult {
  /** Reflectance, transmittance (out of the back of the substrate, or into a semi-infinite one), absorptance (sum of all). */
  R: Float64Array
  T: Float64Array
  A: Float64Array
  /** Absorptance of each layer, in order, then of the substrate (zero when it is semi-infinite). */
  absorbed: Float64Array[]
}

const el = (x: Num, i: number): number => (typeof x === 'number' ? x : x[i])

/**
 * Reflectance, transmittance and absorptance of a multilayer on a substrate, with each layer's share of the absorbed
 * light, over a wavelength grid.
 *
 * - `lambda`: vacuum wavelengths, m (> 0), a Float64Array (the grid) or one number
 * - `layers`: [{ n, k, d }] from the ambient side (n, k dimensionless, k ≥ 0, Num over the grid; d in m, ≥ 0)
 * - `ambient`: ambient index (real, > 0); `substrate`: { n, k, d?, coherent? } (see StackSubstrate)
 * - `angle`: angle of incidence in the ambient, rad, 0 ≤ angle < π/2; `polarization`: 's', 'p' or 'unpolarized'
 *   (the mean of s and p)
 * - result: { R, T, A, absorbed } as fractions 0–1 over the grid; R + T + A = 1 and A = Σ absorbed, to rounding
 *
 * A thick incoherent substrate (intensities, both faces; its index taken real at the faces, its k attenuating each
 * pass by exp(−4πk·d/(λ·cos θs))): with Rf, Tf the coherent front seen from the ambient, Rf' and Tf' seen from inside
 * the substrate, Rb the bare back face and x the single-pass transmission, D = 1 − x²·Rb·Rf',
 * T = Tf·x·(1 − Rb)/D, R = Rf + Tf'·Tf·x²·Rb/D, A_sub = (1 − x)·(1 + x·Rb)·Tf/D.
 *
 * Source: Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2 (coherent part); the incoherent sum of multiple
 * reflections as in C. C. Katsidis, D. I. Siapkas, Appl. Opt. 41, 3978 (2002), and, for a bare slab, J. I. Pankove,
 * Optical Processes in Semiconductors (1971), ch. 4 (transmittance_slab / reflectance_slab).
 *
 * @example stackResponse(600e-9, [], 1, { n: 1.5, k: 0, d: 1e-3 }, 0, 'unpolarized') (a bare glass slide)
 *   → R = 2·0.04/1.04 = 0.0769231, T = 0.96/1.04 = 0.923077 (reflectance_slab, transmittance_slab with R = 0.04)
 */
export function stackResponse(
  lambda: Num, layers: TmmLayer[], ambient: Num, substrate: StackSubstrate, angle: number, polarization: StackPolarization,
): StackResult {
  check('stack', 'the wavelength', lambda, positive, 'positive')
  check('stack', 'the ambient index', ambient, positive, 'positive')
  check('stack', 'the substrate index', substrate.n, positive, 'positive')
  check('stack', 'the substrate extinction coefficient', substrate.k, nonNegative, 'zero or positive')
  if (!(angle >= 0 && angle < Math.PI / 2))
    throw rangeError('stack', `the angle of incidence must be at least 0° and below 90° (got ${formatDeg(angle)}°)`)
  const d = substrate.d
  if (d !== undefined && !(d >= 0 && Number.isFinite(d))) throw rangeError('stack', `the substrate thickness must be zero or positive (got ${d} m)`)
  const args: Num[] = [lambda, ambient, substrate.n, substrate.k]
  layers.forEach((L, j) => {
    check('stack', `the thickness of layer ${j + 1}`, L.d, nonNegative, 'zero or positive')
    check('stack', `the extinction coefficient of layer ${j + 1}`, L.k, nonNegative, 'zero or positive')
    args.push(L.n, L.k, L.d)
  })
  const len = broadcastLength(...args)
  const count = len < 0 ? 1 : len
  const coherentSub = d !== undefined && substrate.coherent === true
  const thick = d !== undefined && !coherentSub
  const q = layers.length
  // a coherent substrate is one more layer, followed by the ambient
  const front = tmmPoint(coherentSub ? q + 1 : q)
  const back = thick ? tmmPoint(q) : undefined
  const bare = thick ? tmmPoint(0) : undefined
  const out: StackResult = {
    R: new Float64Array(count), T: new Float64Array(count), A: new Float64Array(count),
    absorbed: Array.from({ length: q + 1 }, () => new Float64Array(count)),
  }
  // at normal incidence s and p are the same light: solve once
  const pols: boolean[] = polarization === 's' || angle === 0 ? [false] : polarization === 'p' ? [true] : [false, true]
  const weight = 1 / pols.length
  const sin0 = Math.sin(angle)
  for (let i = 0; i < count; i++) {
    const lam = el(lambda, i)
    const n0 = el(ambient, i)
    const ns = el(substrate.n, i)
    const ks = el(substrate.k, i)
    const s2 = (n0 * sin0) ** 2
    for (let j = 0; j < q; j++) {
      const L = layers[j]
      front.n[j] = el(L.n, i)
      front.k[j] = el(L.k, i)
      front.d[j] = el(L.d, i)
      if (back) {
        back.n[q - 1 - j] = front.n[j]
        back.k[q - 1 - j] = front.k[j]
        back.d[q - 1 - j] = front.d[j]
      }
    }
    if (coherentSub) {
      front.n[q] = ns
      front.k[q] = ks
      front.d[q] = d as number
    }
    let R = 0
    let T = 0
    for (const p of pols) {
      if (!thick) {
        if (coherentSub) solveTmmPoint(front, lam, n0, s2, p, n0, 0)
        else solveTmmPoint(front, lam, n0, s2, p, ns, ks)
        R += weight * front.R
        T += weight * front.T
        for (let j = 0; j < front.q; j++) out.absorbed[j][i] += weight * layerShare(front, j)
        continue
      }
      // thick incoherent substrate: coherent front both ways, bare back face, intensities summed
      solveTmmPoint(front, lam, n0, s2, p, ns, 0)
      const Rf = front.R
      const Tf = front.T
      solveTmmPoint(back as TmmPoint, lam, ns, s2, p, n0, 0)
      const Rr = (back as TmmPoint).R
      const Tr = (back as TmmPoint).T
      solveTmmPoint(bare as TmmPoint, lam, ns, s2, p, n0, 0)
      const Rb = (bare as TmmPoint).R
      const cosS = Math.sqrt(Math.max(0, 1 - s2 / (ns * ns)))
      const x = cosS > 0 ? Math.exp((-4 * Math.PI * ks * (d as number)) / (lam * cosS)) : 0
      const D = 1 - x * x * Rb * Rr
      const up = (Tf * x * x * Rb) / D
      R += weight * (Rf + Tr * up)
      T += weight * ((Tf * x * (1 - Rb)) / D)
      for (let j = 0; j < q; j++) {
        const fromFront = layerShare(front, j)
        // layer j is layer q − 1 − j of the reversed stack
        const fromBack = layerShare(back as TmmPoint, q - 1 - j)
        out.absorbed[j][i] += weight * (fromFront + fromBack * up)
      }
      out.absorbed[q][i] += weight * (((1 - x) * (1 + x * Rb) * Tf) / D)
    }
    out.R[i] = R
    out.T[i] = T
    let A = 0
    for (let j = 0; j <= q; j++) A += out.absorbed[j][i]
    out.A[i] = A
  }
  return out
}

/** The share of the light absorbed in layer j: the flux into it less the flux out; exactly 0 when k = 0 (no rounding noise). */
function layerShare(pt: TmmPoint, j: number): number {
  return pt.k[j] === 0 ? 0 : Math.max(0, pt.flux[j] - pt.flux[j + 1])
}

function formatDeg(rad: number): string {
  return String(Number(((rad * 180) / Math.PI).toPrecision(6)))
}
