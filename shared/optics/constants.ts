/**
 * Physical constants in SI, CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021); NIST SP 961).
 * h, c0, q and kB are exact by the 2019 SI definitions.
 */
/** Planck constant, J s (exact). */
export const h = 6.62607015e-34
/** Reduced Planck constant h/2π, J s. */
export const hbar = h / (2 * Math.PI)
/** Speed of light in vacuum, m/s (exact). */
export const c0 = 299792458
/** Elementary charge, C (exact); also joules per electronvolt. */
export const q = 1.602176634e-19
/** Boltzmann constant, J/K (exact). */
export const kB = 1.380649e-23
/** Vacuum electric permittivity, F/m (CODATA 2018: 8.8541878128(13)e-12). */
export const eps0 = 8.8541878128e-12
/** Electron rest mass, kg (CODATA 2018: 9.1093837015(28)e-31). */
export const me = 9.1093837015e-31
/** Stefan–Boltzmann constant, W m⁻² K⁻⁴ (exact from h, c, kB). */
export const sigmaSB = (2 * Math.PI ** 5 * kB ** 4) / (15 * h ** 3 * c0 ** 2)
