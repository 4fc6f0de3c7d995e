/**
 * One coherent film on a transparent substrate, seen from air at normal incidence, through the transfer-matrix core
 * (./tmm). For a thick substrate whose back face matters, combine with the incoherent slab formulas (./slabs).
 */
import type { Num } from './num'
import { tmmNormal } from './tmm'

/**
 * Reflectance of one coherent absorbing film (index n + ik, thickness d) on a transparent semi-infinite substrate,
 * from air, at normal incidence.
 *
 * - `lambda`: vacuum wavelength, m (> 0); `n`, `k`: film index and extinction coefficient (k ≥ 0)
 * - `d`: film thickness, m (≥ 0); `nSub`: substrate index (> 0)
 * - result: reflectance, 0–1
 *
 * Source: characteristic-matrix method, H. A. Macleod, Thin-Film Optical Filters, 4th ed. (2010), ch. 2; for k = 0
 * equal to the Airy formula of Born & Wolf, Principles of Optics, §7.6.
 *
 * @example filmReflectance(600e-9, 2, 0, 75e-9, 1.5) (quarter wave, n² > ns) → ((1.5 − 4)/(1.5 + 4))² = 0.2066116
 */
export function filmReflectance(lambda: Num, n: Num, k: Num, d: Num, nSub: Num): Num {
  return tmmNormal(lambda, [{ n, k, d }], 1, nSub).R
}

/**
 * Transmittance into the substrate of one coherent absorbing film on a transparent semi-infinite substrate, from air,
 * at normal incidence (the light that crosses the film; the substrate's back face is not included).
 *
 * - `lambda`: vacuum wavelength, m (> 0); `n`, `k`: film index and extinction coefficient (k ≥ 0)
 * - `d`: film thickness, m (≥ 0); `nSub`: substrate index (> 0)
 * - result: transmittance, 0–1 (for k = 0, 1 − filmReflectance)
 *
 * Source: as filmReflectance (Macleod (2010) ch. 2: T = 4·n0·ns/|n0·B + C|²).
 *
 * @example filmTransmittance(600e-9, 2, 0, 150e-9, 1.5) (half wave: absentee layer) → 1 − 0.04 = 0.96
 */
export function filmTransmittance(lambda: Num, n: Num, k: Num, d: Num, nSub: Num): Num {
  return tmmNormal(lambda, [{ n, k, d }], 1, nSub).T
}
