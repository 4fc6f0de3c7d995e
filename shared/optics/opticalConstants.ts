/**
 * Optical constants: α ↔ k, n and k from the dielectric function, dispersion formulas (Cauchy, Sellmeier), the Drude
 * free-carrier dielectric function and the Tauc–Lorentz model for amorphous and polycrystalline films.
 * All SI: wavelengths in m, photon energies in J, α in 1/m; n, k and ε dimensionless.
 */
import type { Num } from './num'
import { map2, broadcastLength } from './num'
import { map4, map5, mapArgs, check, positive, nonNegative, rangeError } from './broadcast'

const FOUR_PI = 4 * Math.PI

/**
 * Absorption coefficient from the extinction coefficient, α = 4πk/λ.
 *
 * - `k`: extinction coefficient (≥ 0); `lambda`: vacuum wavelength, m (> 0)
 * - result: α, 1/m
 *
 * Source: Born & Wolf, Principles of Optics, 7th ed., ch. 14 (intensity decays as exp(−4πkz/λ)).
 *
 * @example alphaFromK(0.0198, 600e-9) (silicon, 600 nm) → 4.14690e5 1/m (4147 cm⁻¹)
 */
export function alphaFromK(k: Num, lambda: Num): Num {
  if (typeof k !== 'number' && typeof lambda !== 'number') {
    const n = broadcastLength(k, lambda)
    const out = new Float64Array(n)
    for (let i = 0; i < n; i++) out[i] = (FOUR_PI * k[i]) / lambda[i]
    return out
  }
  return map2(k, lambda, (kk, l) => (FOUR_PI * kk) / l)
}

/**
 * Extinction coefficient from the absorption coefficient, k = αλ/(4π) (inverse of alphaFromK).
 *
 * - `alpha`: 1/m (≥ 0); `lambda`: vacuum wavelength, m (> 0)
 * - result: k, dimensionless
 *
 * Source: as alphaFromK.
 *
 * @example kFromAlpha(1e6, 500e-9) (1e4 cm⁻¹ at 500 nm) → 0.0397887
 */
export function kFromAlpha(alpha: Num, lambda: Num): Num {
  if (typeof alpha !== 'number' && typeof lambda !== 'number') {
    const n = broadcastLength(alpha, lambda)
    const out = new Float64Array(n)
    for (let i = 0; i < n; i++) out[i] = (alpha[i] * lambda[i]) / FOUR_PI
    return out
  }
  return map2(alpha, lambda, (a, l) => (a * l) / FOUR_PI)
}

/**
 * Both n and k from ε1 + iε2 (the principal square root, n ≥ 0), without cancellation: the larger of n, k is taken
 * from √((|ε| ± ε1)/2) and the other as ε2/(2·larger).
 */
function nk(e1: number, e2: number): [number, number] {
  const m = Math.hypot(e1, e2)
  if (e1 >= 0) {
    const n = Math.sqrt((m + e1) / 2)
    return [n, n === 0 ? 0 : e2 / (2 * n)]
  }
  const k = Math.sqrt((m - e1) / 2) * (e2 < 0 ? -1 : 1)
  return [e2 / (2 * k), k]
}

/**
 * Refractive index from the dielectric function: n = √((|ε| + ε1)/2), |ε| = √(ε1² + ε2²).
 *
 * - `eps1`, `eps2`: real and imaginary parts of ε (ε2 ≥ 0 for an absorbing medium)
 * - result: n (≥ 0)
 *
 * Source: N² = ε with N = n + ik, so ε1 = n² − k², ε2 = 2nk (Born & Wolf, ch. 14). Computed without cancellation
 * for metals (ε1 < 0, small ε2) as n = ε2/(2k).
 *
 * @example nFromEps(12, 1) → 3.467102 (and kFromEps(12, 1) → 0.1442127)
 */
export function nFromEps(eps1: Num, eps2: Num): Num {
  return map2(eps1, eps2, (a, b) => nk(a, b)[0])
}

/**
 * Extinction coefficient from the dielectric function: k = √((|ε| − ε1)/2) (sign of ε2).
 *
 * - `eps1`, `eps2`: real and imaginary parts of ε
 * - result: k (≥ 0 when ε2 ≥ 0)
 *
 * Source: as nFromEps.
 *
 * @example kFromEps(-20, 1) (a metal) → 4.473532 (and nFromEps(-20, 1) → 0.1117685)
 */
export function kFromEps(eps1: Num, eps2: Num): Num {
  return map2(eps1, eps2, (a, b) => nk(a, b)[1])
}

/**
 * Cauchy dispersion formula n(λ) = A + B/λ² + C/λ⁴, for transparent materials away from absorption bands.
 *
 * - `lambda`: vacuum wavelength, m (> 0); `A`: dimensionless; `B`: m² (a table in µm² times 1e-12);
 *   `C`: m⁴ (µm⁴ times 1e-24)
 * - result: n
 *
 * Source: A.-L. Cauchy (1836); e.g. F. A. Jenkins, H. E. White, Fundamentals of Optics (chapter on dispersion).
 *
 * @example cauchyN(500e-9, 1.5, 4e-15, 0) (B = 0.004 µm²) → 1.5 + 0.004/0.25 = 1.516
 */
export function cauchyN(lambda: Num, A: Num, B: Num, C: Num): Num {
  return map4(lambda, A, B, C, (l, a, b, c) => {
    const l2 = l * l
    return a + b / l2 + c / (l2 * l2)
  })
}

/**
 * Three-term Sellmeier formula n²(λ) = 1 + Σ Bᵢ·λ²/(λ² − Cᵢ).
 *
 * - `lambda`: vacuum wavelength, m (> 0); `B1`, `B2`, `B3`: dimensionless; `C1`, `C2`, `C3`: m² (a table's µm² times
 *   1e-12)
 * - result: n (NaN where n² < 0, inside an absorption pole region the formula does not cover)
 *
 * Source: W. Sellmeier, Ann. Phys. 219, 272 (1871); fused-silica coefficients of I. H. Malitson, J. Opt. Soc. Am. 55,
 * 1205 (1965) in the test.
 *
 * @example sellmeierN(587.6e-9, 0.6961663, 0.0684043²e-12, 0.4079426, 0.1162414²e-12, 0.8974794, 9.896161²e-12)
 *   (fused silica, Malitson 1965) → 1.458462
 */
export function sellmeierN(lambda: Num, B1: Num, C1: Num, B2: Num, C2: Num, B3: Num, C3: Num): Num {
  return mapArgs([lambda, B1, C1, B2, C2, B3, C3], (x) => {
    const l2 = x[0] * x[0]
    const n2 = 1 + (x[1] * l2) / (l2 - x[2]) + (x[3] * l2) / (l2 - x[4]) + (x[5] * l2) / (l2 - x[6])
    return Math.sqrt(n2)
  })
}

/**
 * Real part of the Drude free-carrier dielectric function ε(E) = ε∞ − Ep²/(E² + iγE):
 * ε1 = ε∞ − Ep²/(E² + γ²).
 *
 * - `E`: photon energy, J (> 0); `Ep`: unscreened plasma energy ħωp = ħ·√(N·q²/(ε0·m*)), J; `gamma`: damping ħ/τ, J
 *   (≥ 0); `epsInf`: background (high-frequency) permittivity, dimensionless
 * - result: ε1, dimensionless (zero near the screened plasma energy √(Ep²/ε∞ − γ²))
 *
 * Source: P. Drude (1900); N. W. Ashcroft, N. D. Mermin, Solid State Physics (1976), ch. 1, with a
 * background ε∞ as in M. Fox, Optical Properties of Solids, 2nd ed. (2010), ch. 7.
 *
 * @example drudeEps1(1 eV, 2 eV, 0.1 eV, 4) → 4 − 4/1.01 = 0.039604
 */
export function drudeEps1(E: Num, Ep: Num, gamma: Num, epsInf: Num): Num {
  check('drude_eps1', 'the damping gamma', gamma, nonNegative, 'zero or positive')
  return map4(E, Ep, gamma, epsInf, (e, p, g, inf) => inf - (p * p) / (e * e + g * g))
}

/**
 * Imaginary part of the Drude dielectric function: ε2 = Ep²·γ / (E·(E² + γ²)). ε∞ is real, so it does not enter;
 * it is accepted so that drude_eps1 and drude_eps2 take the same arguments.
 *
 * - `E`: photon energy, J (> 0); `Ep`: plasma energy, J; `gamma`: damping, J (≥ 0); `epsInf`: unused (finite)
 * - result: ε2, dimensionless (≥ 0)
 *
 * Source: as drudeEps1.
 *
 * @example drudeEps2(1 eV, 2 eV, 0.1 eV, 4) → 4·0.1/(1·1.01) = 0.396040
 */
export function drudeEps2(E: Num, Ep: Num, gamma: Num, epsInf: Num): Num {
  check('drude_eps2', 'the damping gamma', gamma, nonNegative, 'zero or positive')
  check('drude_eps2', 'eps_inf', epsInf, Number.isFinite, 'a finite number')
  return map4(E, Ep, gamma, epsInf, (e, p, g) => (p * p * g) / (e * (e * e + g * g)))
}

function tlEps2(E: number, A: number, E0: number, C: number, Eg: number): number {
  if (!(E > Eg)) return 0
  const x = E - Eg
  const w = E * E - E0 * E0
  return (A * E0 * C * x * x) / ((w * w + C * C * E * E) * E)
}

function checkTL(fn: string, A: Num, E0: Num, C: Num, Eg: Num): void {
  check(fn, 'the amplitude A', A, nonNegative, 'zero or positive')
  check(fn, 'the resonance energy E0', E0, positive, 'positive')
  check(fn, 'the broadening C', C, positive, 'positive')
  check(fn, 'the gap Eg', Eg, nonNegative, 'zero or positive')
}

/**
 * Imaginary part of the Tauc–Lorentz dielectric function (a Tauc joint density of states times a Lorentz
 * oscillator): ε2 = A·E0·C·(E − Eg)² / (((E² − E0²)² + C²E²)·E) for E > Eg, 0 otherwise.
 *
 * - `E`: photon energy, J; `A`: amplitude, J (≥ 0); `E0`: resonance energy, J (> 0); `C`: broadening, J (> 0);
 *   `Eg`: gap, J (≥ 0)
 * - result: ε2, dimensionless
 *
 * Source: G. E. Jellison Jr., F. A. Modine, Appl. Phys. Lett. 69, 371 (1996); erratum 69, 2137 (1996).
 *
 * @example taucLorentzEps2(3 eV, 100 eV, 3.5 eV, 2 eV, 1.5 eV) → 100·3.5·2·1.5²/((9 − 12.25)² + 4·9)/3 = 11.27517
 */
export function taucLorentzEps2(E: Num, A: Num, E0: Num, C: Num, Eg: Num): Num {
  checkTL('tauc_lorentz_eps2', A, E0, C, Eg)
  return map5(E, A, E0, C, Eg, tlEps2)
}

/**
 * ε1 − ε∞ of Tauc–Lorentz in closed form, computed in units of E0 (ε is dimensionless, so the scale drops out and the
 * logarithms stay O(1)). The two logarithms of |E − Eg| (terms 4 and 5 of the paper) are combined near E = Eg, where
 * each diverges but their sum tends to a finite limit.
 */
function tlEps1(Ein: number, Ain: number, E0in: number, Cin: number, Egin: number): number {
  const s = E0in
  const E = Ein / s
  const A = Ain / s
  const C = Cin / s
  const Eg = Egin / s
  const E0 = 1
  const a2 = 4 * E0 * E0 - C * C
  if (!(a2 > 0)) return NaN
  const al = Math.sqrt(a2)
  const g2 = E0 * E0 - (C * C) / 2
  const E2 = E * E
  const Eg2 = Eg * Eg
  const z4 = (E2 - g2) * (E2 - g2) + (a2 * C * C) / 4
  const aLn = (Eg2 - E0 * E0) * E2 + Eg2 * C * C - E0 * E0 * (E0 * E0 + 3 * Eg2)
  const aAtan = (E2 - E0 * E0) * (E0 * E0 + Eg2) + Eg2 * C * C
  const PI = Math.PI
  const t1 = ((A * C * aLn) / (2 * PI * z4 * al * E0)) * Math.log((E0 * E0 + Eg2 + al * Eg) / (E0 * E0 + Eg2 - al * Eg))
  const t2 = (-(A * aAtan) / (PI * z4 * E0)) * (PI - Math.atan((2 * Eg + al) / C) + Math.atan((al - 2 * Eg) / C))
  const t3 = ((2 * A * E0 * Eg * (E2 - g2)) / (PI * z4 * al)) * (PI + 2 * Math.atan((2 * (g2 - Eg2)) / (al * C)))
  const K = (A * E0 * C) / (PI * z4)
  let t45: number
  if (Eg === 0) {
    t45 = 0
  } else if (E < 0.5 * Eg) {
    // terms 4 and 5 as printed; ln(|E − Eg|/(E + Eg)) through log1p, and its E → 0 limit (−2E/Eg)
    const D = Math.sqrt((E0 * E0 - Eg2) * (E0 * E0 - Eg2) + Eg2 * C * C)
    const t4 = E === 0 ? 2 * K * Eg : -K * ((E2 + Eg2) / E) * Math.log1p((-2 * E) / (E + Eg))
    const t5 = 2 * K * Eg * Math.log(((Eg - E) * (E + Eg)) / D)
    t45 = t4 + t5
  } else {
    // −((E²+Eg²)/E)·ln(|E−Eg|/(E+Eg)) + 2Eg·ln(|E−Eg|(E+Eg)/D) = −((E−Eg)²/E)·ln|E−Eg| + ((E+Eg)²/E)·ln(E+Eg) − 2Eg·ln D
    const x = Math.abs(E - Eg)
    const lnX = x === 0 ? 0 : ((E - Eg) * (E - Eg)) / E * Math.log(x)
    const D2 = (E0 * E0 - Eg2) * (E0 * E0 - Eg2) + Eg2 * C * C
    t45 = K * (-lnX + (((E + Eg) * (E + Eg)) / E) * Math.log(E + Eg) - Eg * Math.log(D2))
  }
  return t1 + t2 + t3 + t45
}

/**
 * Real part of the Tauc–Lorentz dielectric function, the Kramers–Kronig transform of taucLorentzEps2 in the closed
 * form of Jellison & Modine: ε1 = ε∞ + five terms in ln and arctan of E, E0, C and Eg (α = √(4E0² − C²),
 * γ² = E0² − C²/2, ζ⁴ = (E² − γ²)² + α²C²/4).
 *
 * - `E`: photon energy, J (≥ 0); `A`, `E0`, `C`, `Eg`: as taucLorentzEps2 (J), with C < 2·E0; `epsInf`: ε1 at
 *   infinite energy, dimensionless
 * - result: ε1, dimensionless (NaN when C ≥ 2E0, outside the model)
 *
 * Source: G. E. Jellison Jr., F. A. Modine, Appl. Phys. Lett. 69, 371 (1996), the closed form of ε1, with the correction of the
 * erratum, Appl. Phys. Lett. 69, 2137 (1996). Checked against a numerical Kramers–Kronig integral of ε2 in the tests.
 *
 * @example taucLorentzEps1(3 eV, 100 eV, 3.5 eV, 2 eV, 1.5 eV, 1) → 13.50861 (the test checks it against
 *   1 + (2/π)·P∫ ξε2(ξ)/(ξ² − E²) dξ)
 */
export function taucLorentzEps1(E: Num, A: Num, E0: Num, C: Num, Eg: Num, epsInf: Num): Num {
  checkTL('tauc_lorentz_eps1', A, E0, C, Eg)
  check('tauc_lorentz_eps1', 'the photon energy E', E, nonNegative, 'zero or positive')
  if (typeof C === 'number' && typeof E0 === 'number' && !(C < 2 * E0)) {
    throw rangeError('tauc_lorentz_eps1', `the broadening C must be below 2·E0 (got C = ${C}, E0 = ${E0})`)
  }
  return mapArgs([E, A, E0, C, Eg, epsInf], (x) => x[5] + tlEps1(x[0], x[1], x[2], x[3], x[4]))
}
