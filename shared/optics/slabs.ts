/**
 * Slabs: normal-incidence Fresnel reflectance, single-pass Beer–Lambert absorption, and the incoherent thick slab
 * with multiple reflections between its two faces (both faces with the same reflectance R), its exact inverse, and
 * the light-trapping limit of a Lambertian slab. All SI: α in 1/m, thicknesses in m, R, T, A as fractions 0–1.
 *
 * The hot ones (absorbedFraction, transmittanceSlab, reflectanceSlab, absorptanceSlab) carry their own loops: a
 * thickness-by-wavelength sweep calls them with one array and scalars, thousands of times.
 */
import type { Num } from './num'
import { broadcastLength, map2 } from './num'
import { map3, check, positive, nonNegative, ArgumentRangeError } from './broadcast'

const LN10 = Math.LN10

/**
 * Normal-incidence reflectance of the interface between a transparent ambient of index n0 and a medium of complex
 * index n + ik: R = ((n − n0)² + k²) / ((n + n0)² + k²).
 *
 * - `n`, `k`: refractive index and extinction coefficient of the medium (dimensionless, k ≥ 0)
 * - `n0`: refractive index of the ambient (default 1, air/vacuum; > 0)
 * - result: reflectance, fraction 0–1
 *
 * Source: Fresnel equations at normal incidence with a complex index (M. Born, E. Wolf, Principles of Optics,
 * 7th ed., ch. 14, optics of metals).
 *
 * @example reflectance(1.5, 0) → 0.04; reflectance(3.939, 0.0198) (silicon at 600 nm) → 0.354106
 */
export function reflectance(n: Num, k: Num, n0: Num = 1): Num {
  check('reflectance', 'the ambient index n0', n0, positive, 'positive')
  return map3(n, k, n0, (nn, kk, a) => {
    const k2 = kk * kk
    return ((nn - a) * (nn - a) + k2) / ((nn + a) * (nn + a) + k2)
  })
}

/**
 * Fraction of the light entering a layer that is absorbed in one pass (Beer–Lambert), 1 − exp(−αd).
 *
 * - `alpha`: absorption coefficient, 1/m (≥ 0); `d`: thickness, m (≥ 0)
 * - result: absorbed fraction, 0–1 (no reflection losses, no second pass)
 *
 * Source: Beer–Lambert law (Pankove, Optical Processes in Semiconductors (1971), ch. 4).
 *
 * @example absorbedFraction(1e6, 1e-6) (1e4 cm⁻¹, 1 µm) → 1 − e⁻¹ = 0.63212056
 */
export function absorbedFraction(alpha: Num, d: Num): Num {
  check('absorbed_fraction', 'the thickness d', d, nonNegative, 'zero or positive')
  if (typeof alpha !== 'number' && typeof d === 'number') {
    const out = new Float64Array(alpha.length)
    for (let i = 0; i < out.length; i++) out[i] = -Math.expm1(-alpha[i] * d)
    return out
  }
  return map2(alpha, d, (a, t) => -Math.expm1(-a * t))
}

/**
 * Absorption (penetration) depth 1/α: the depth at which the intensity has fallen to 1/e.
 *
 * - `alpha`: absorption coefficient, 1/m (> 0; 0 gives Infinity)
 * - result: depth, m
 *
 * Source: Beer–Lambert law (definition).
 *
 * @example absorptionDepth(1e6) (1e4 cm⁻¹) → 1e-6 m
 */
export function absorptionDepth(alpha: Num): Num {
  if (typeof alpha === 'number') return 1 / alpha
  const out = new Float64Array(alpha.length)
  for (let i = 0; i < out.length; i++) out[i] = 1 / alpha[i]
  return out
}

/**
 * Thickness that absorbs the given fraction in one pass: d = −ln(1 − fraction)/α (inverse of absorbedFraction).
 *
 * - `alpha`: absorption coefficient, 1/m (> 0); `fraction`: 0 ≤ fraction < 1 (1 gives Infinity)
 * - result: thickness, m
 *
 * Source: Beer–Lambert law, solved for d.
 *
 * @example thicknessFor(1e6, 0.9) → ln(10)·1e-6 m = 2.3025851e-6 m
 */
export function thicknessFor(alpha: Num, fraction: Num): Num {
  check('thickness_for', 'the fraction', fraction, (f) => f >= 0 && f <= 1, 'between 0 and 1')
  check('thickness_for', 'the absorption coefficient', alpha, positive, 'positive')
  return map2(alpha, fraction, (a, f) => -Math.log1p(-f) / a)
}

function badR(fn: string, R: number): RangeError {
  return new ArgumentRangeError(`${fn}: the face reflectance R must be between 0 and 1 (got ${R})`, fn, 'the face reflectance R', 'between 0 and 1', R)
}

/**
 * Transmittance of a thick slab (incoherent light; both faces of reflectance R, multiple reflections summed):
 * T = (1 − R)²·x / (1 − R²·x²), x = exp(−αd).
 *
 * - `alpha`: absorption coefficient, 1/m (≥ 0); `d`: thickness, m (≥ 0); `R`: single-face reflectance, 0–1
 * - result: transmittance, 0–1
 *
 * Source: the incoherent (intensity) sum of the geometric series of internal reflections; J. I. Pankove, Optical
 * Processes in Semiconductors (1971), ch. 4 (measurement of absorption); D. K. Schroder, Semiconductor Material and
 * Device Characterization, 3rd ed. (2006), ch. 10 (optical characterization).
 *
 * @example transmittanceSlab(1e5, 1e-5, 0.3) (x = e⁻¹) → 0.49·0.36788/(1 − 0.09·0.13534) = 0.182484
 */
export function transmittanceSlab(alpha: Num, d: Num, R: Num): Num {
  check('transmittance_slab', 'the thickness d', d, nonNegative, 'zero or positive')
  const n = broadcastLength(alpha, d, R)
  if (n < 0) {
    const r = R as number
    if (!(r >= 0 && r <= 1)) throw badR('transmittance_slab', r)
    const x = Math.exp(-(alpha as number) * (d as number))
    return ((1 - r) * (1 - r) * x) / (1 - r * r * x * x)
  }
  const out = new Float64Array(n)
  const A = typeof alpha === 'number' ? null : alpha
  const D = typeof d === 'number' ? null : d
  const RR = typeof R === 'number' ? null : R
  if (A && !D && !RR) {
    const t = d as number
    const r = R as number
    if (!(r >= 0 && r <= 1)) throw badR('transmittance_slab', r)
    const a = (1 - r) * (1 - r)
    const r2 = r * r
    for (let i = 0; i < n; i++) {
      const x = Math.exp(-A[i] * t)
      out[i] = (a * x) / (1 - r2 * x * x)
    }
    return out
  }
  for (let i = 0; i < n; i++) {
    const r = RR ? RR[i] : (R as number)
    if (!(r >= 0 && r <= 1)) throw badR('transmittance_slab', r)
    const x = Math.exp(-(A ? A[i] : (alpha as number)) * (D ? D[i] : (d as number)))
    out[i] = ((1 - r) * (1 - r) * x) / (1 - r * r * x * x)
  }
  return out
}

/**
 * Reflectance of a thick slab (incoherent, multiple reflections): R_slab = R + R·(1 − R)²·x² / (1 − R²·x²),
 * x = exp(−αd).
 *
 * - `alpha`: 1/m (≥ 0); `d`: m (≥ 0); `R`: single-face reflectance, 0–1
 * - result: reflectance of the slab, 0–1 (tends to R for an opaque slab, to 2R/(1 + R) for a transparent one)
 *
 * Source: the same geometric series as transmittanceSlab (Pankove (1971) ch. 4; Schroder (2006) ch. 10).
 *
 * @example reflectanceSlab(0, 1e-3, 0.3) → 0.6/1.3 = 0.46153846
 */
export function reflectanceSlab(alpha: Num, d: Num, R: Num): Num {
  check('reflectance_slab', 'the thickness d', d, nonNegative, 'zero or positive')
  const n = broadcastLength(alpha, d, R)
  const one = (a: number, t: number, r: number): number => {
    if (!(r >= 0 && r <= 1)) throw badR('reflectance_slab', r)
    const x = Math.exp(-a * t)
    const x2 = x * x
    return r + (r * (1 - r) * (1 - r) * x2) / (1 - r * r * x2)
  }
  if (n < 0) return one(alpha as number, d as number, R as number)
  const out = new Float64Array(n)
  const A = typeof alpha === 'number' ? null : alpha
  const D = typeof d === 'number' ? null : d
  const RR = typeof R === 'number' ? null : R
  if (A && !D && !RR) {
    const t = d as number
    const r = R as number
    if (!(r >= 0 && r <= 1)) throw badR('reflectance_slab', r)
    const c = r * (1 - r) * (1 - r)
    const r2 = r * r
    for (let i = 0; i < n; i++) {
      const x = Math.exp(-A[i] * t)
      const x2 = x * x
      out[i] = r + (c * x2) / (1 - r2 * x2)
    }
    return out
  }
  for (let i = 0; i < n; i++) out[i] = one(A ? A[i] : (alpha as number), D ? D[i] : (d as number), RR ? RR[i] : (R as number))
  return out
}

/**
 * Absorptance of a thick slab (incoherent, multiple reflections): A = 1 − T − R_slab = (1 − R)(1 − x)/(1 − R·x),
 * x = exp(−αd).
 *
 * - `alpha`: 1/m (≥ 0); `d`: m (≥ 0); `R`: single-face reflectance, 0–1
 * - result: absorptance, 0–1
 *
 * Source: energy balance of transmittanceSlab and reflectanceSlab, summed in closed form.
 *
 * @example absorptanceSlab(1e5, 1e-5, 0.3) (x = e⁻¹) → 0.7·0.63212/(1 − 0.3·0.36788) = 0.497377
 */
export function absorptanceSlab(alpha: Num, d: Num, R: Num): Num {
  check('absorptance_slab', 'the thickness d', d, nonNegative, 'zero or positive')
  // with m = x − 1 = expm1(−αd) from one call: A = (1 − R)(−m) / ((1 − R) − R·m), which keeps its digits for
  // αd → 0 (m small) and for an opaque slab (m → −1, the denominator → 1)
  const n = broadcastLength(alpha, d, R)
  if (n < 0) {
    const r = R as number
    if (!(r >= 0 && r <= 1)) throw badR('absorptance_slab', r)
    const m = Math.expm1(-(alpha as number) * (d as number))
    return ((1 - r) * -m) / (1 - r - r * m)
  }
  const out = new Float64Array(n)
  const A = typeof alpha === 'number' ? null : alpha
  const D = typeof d === 'number' ? null : d
  const RR = typeof R === 'number' ? null : R
  if (A && !D && !RR) {
    const t = d as number
    const r = R as number
    if (!(r >= 0 && r <= 1)) throw badR('absorptance_slab', r)
    const c = 1 - r
    for (let i = 0; i < n; i++) {
      const m = Math.expm1(-A[i] * t)
      out[i] = (c * -m) / (c - r * m)
    }
    return out
  }
  for (let i = 0; i < n; i++) {
    const r = RR ? RR[i] : (R as number)
    if (!(r >= 0 && r <= 1)) throw badR('absorptance_slab', r)
    const m = Math.expm1(-(A ? A[i] : (alpha as number)) * (D ? D[i] : (d as number)))
    out[i] = ((1 - r) * -m) / (1 - r - r * m)
  }
  return out
}

/**
 * Absorption coefficient from a measured slab transmittance, the exact inverse of transmittanceSlab: with
 * x = exp(−αd), T·R²·x² + (1 − R)²·x − T = 0, whose positive root is
 * x = 2T / ((1 − R)² + √((1 − R)⁴ + 4T²R²)); α = −ln(x)/d.
 *
 * - `T`: measured transmittance, fraction (0 < T ≤ 1; 0 gives Infinity)
 * - `R`: single-face reflectance, 0 ≤ R < 1; `d`: thickness, m (> 0)
 * - result: α, 1/m. A T above the lossless limit (1 − R)/(1 + R) gives a negative α: the data and R disagree.
 *
 * Source: the quadratic of transmittanceSlab solved for x (Schroder (2006) ch. 10 gives the same inversion); the
 * root is written in the form without cancellation.
 *
 * @example alphaFromTransmittance(0.18248361, 0.3, 1e-5) → 1.0000e5 1/m (inverts the transmittanceSlab example)
 */
export function alphaFromTransmittance(T: Num, R: Num, d: Num): Num {
  check('alpha_from_transmittance', 'the thickness d', d, positive, 'positive')
  check('alpha_from_transmittance', 'the transmittance T', T, nonNegative, 'zero or positive')
  check('alpha_from_transmittance', 'the face reflectance R', R, (r) => r >= 0 && r < 1, 'at least 0 and below 1')
  return map3(T, R, d, (t, r, th) => {
    const a = (1 - r) * (1 - r)
    const x = (2 * t) / (a + Math.sqrt(a * a + 4 * t * t * r * r))
    return -Math.log(x) / th
  })
}

/**
 * Absorption coefficient from a decadic absorbance, α = A10·ln(10)/d (A10 = −log10 of the internal transmittance).
 *
 * - `A10`: absorbance (optical density), dimensionless; `d`: thickness, m (> 0)
 * - result: α, 1/m
 *
 * Source: Beer–Lambert law in decadic form (IUPAC Gold Book, "absorbance").
 *
 * @example alphaFromAbsorbance(1, 1e-6) → 2.3025851e6 1/m
 */
export function alphaFromAbsorbance(A10: Num, d: Num): Num {
  check('alpha_from_absorbance', 'the thickness d', d, positive, 'positive')
  return map2(A10, d, (a, t) => (a * LN10) / t)
}

/**
 * Absorptance of a slab with a randomising (Lambertian) front and a perfect rear mirror, in the geometric-optics
 * light-trapping limit: A = (1 − e^(−4αd)) / (1 − (1 − 1/n²)·e^(−4αd)). For weak absorption (4n²αd ≪ 1) it tends
 * to 4n²·αd, the 4n² enhancement; for strong absorption to 1. Front-surface reflection is not included.
 *
 * - `alpha`: 1/m (≥ 0); `d`: thickness, m (≥ 0); `n`: refractive index of the slab (≥ 1)
 * - result: absorptance, 0–1
 *
 * Source: E. Yablonovitch, J. Opt. Soc. Am. 72, 899 (1982) (the 4n² limit); the closed form uses the mean
 * double-pass path 4d of Lambertian light, as in M. A. Green, Prog. Photovolt. 10, 235 (2002) (from memory).
 *
 * @example absorptanceLambertian(1e2, 1e-6, 3.5) (αd = 1e-4) → 4.87708e-3 (≈ 4n²αd = 4.9e-3)
 */
export function absorptanceLambertian(alpha: Num, d: Num, n: Num): Num {
  check('absorptance_lambertian', 'the thickness d', d, nonNegative, 'zero or positive')
  check('absorptance_lambertian', 'the refractive index n', n, (v) => v >= 1, 'at least 1')
  return map3(alpha, d, n, (a, t, nn) => {
    const inv = 1 / (nn * nn)
    const num = -Math.expm1(-4 * a * t)
    // denominator rewritten as 1/n² + (1 − 1/n²)(1 − e^(−4αd)) so the weak limit keeps its digits
    return num / (inv + (1 - inv) * num)
  })
}
