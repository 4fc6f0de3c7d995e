/**
 * Spectra and devices: black-body photon radiance, irradiance → photon flux, photocurrent of an absorber under a
 * spectrum, and the detailed-balance (Shockley–Queisser) efficiency of a step absorber.
 * All SI: wavelengths in m, spectral quantities per metre of wavelength (a table in W m⁻² nm⁻¹ is ×1e9 in SI),
 * current densities in A/m² (1 mA/cm² = 10 A/m²).
 */
import type { Num } from './num'
import { broadcastLength, map2 } from './num'
import { check, nonNegative, positive, rangeError, ArgumentRangeError } from './broadcast'
import { c0, h, kB, q } from './constants'

const HC = h * c0

/**
 * Spectral photon radiance of a black body per unit wavelength, L = (2c/λ⁴) / (exp(hc/(λkT)) − 1).
 *
 * - `lambda`: vacuum wavelength, m (> 0); `T`: temperature, K (≥ 0)
 * - result: photons m⁻² s⁻¹ sr⁻¹ per metre of wavelength
 *
 * Source: Planck's law written for photon numbers (energy radiance divided by hc/λ); e.g. P. Würfel, Physics of
 * Solar Cells, 2nd ed. (2009), ch. 2.
 *
 * @example planckPhotonRadiance(1e-6, 5800) → 5.47615e31 photons m⁻² s⁻¹ sr⁻¹ m⁻¹
 */
export function planckPhotonRadiance(lambda: Num, T: Num): Num {
  check('planck_photon_radiance', 'the temperature T', T, nonNegative, 'zero or positive (kelvin)')
  return map2(lambda, T, (l, t) => (2 * c0) / (l * l * l * l) / Math.expm1(HC / (l * kB * t)))
}

/**
 * Spectral photon flux from spectral irradiance, Φ = Iλ·λ/(hc).
 *
 * - `lambda`: vacuum wavelength, m (> 0); `irradiance`: spectral irradiance, W m⁻² per metre of wavelength
 * - result: photons m⁻² s⁻¹ per metre of wavelength
 *
 * Source: photon energy hc/λ (Planck–Einstein).
 *
 * @example photonFlux(1e-6, 1e9) (1 W m⁻² nm⁻¹ at 1 µm) → 5.0341165e27 photons m⁻² s⁻¹ m⁻¹ (5.03e18 per nm)
 */
export function photonFlux(lambda: Num, irradiance: Num): Num {
  return map2(lambda, irradiance, (l, I) => (I * l) / HC)
}

function gridOf(fn: string, lambda: Num, others: Num[]): Float64Array {
  if (typeof lambda === 'number') throw rangeError(fn, 'needs a wavelength grid (an array), not a single wavelength')
  if (lambda.length < 2) throw rangeError(fn, 'needs at least two wavelengths')
  broadcastLength(lambda, ...others)
  return lambda
}

/**
 * Photocurrent density of an absorber that turns every absorbed photon into one collected electron,
 * J = q·∫ A(λ)·Φ(λ) dλ (trapezoid rule with |Δλ|, so a grid running from long to short wavelengths gives the same).
 *
 * - `lambda`: wavelength grid, m (array, ≥ 2 points); `absorptance`: 0–1 (array on the grid, or one number);
 *   `flux`: spectral photon flux, photons m⁻² s⁻¹ per metre of wavelength (array on the grid, or one number)
 * - result: current density, A/m² (divide by 10 for mA/cm²)
 *
 * Source: definition of the short-circuit current at unit internal quantum efficiency (Würfel (2009) ch. 6).
 *
 * @example photocurrent([400e-9, 500e-9], 1, 1e27) → q·1e27·1e-7 = 1.602177e1 A/m² (1.602 mA/cm²)
 */
export function photocurrent(lambda: Num, absorptance: Num, flux: Num): number {
  const x = gridOf('photocurrent', lambda, [absorptance, flux])
  // one pass, no per-element closure: a thickness sweep calls this once per step
  const A = typeof absorptance === 'number' ? null : absorptance
  const F = typeof flux === 'number' ? null : flux
  const a0 = absorptance as number
  const f0 = flux as number
  let prev = (A ? A[0] : a0) * (F ? F[0] : f0)
  let s = 0
  for (let i = 1; i < x.length; i++) {
    const cur = (A ? A[i] : a0) * (F ? F[i] : f0)
    s += Math.abs(x[i] - x[i - 1]) * 0.5 * (prev + cur)
    prev = cur
  }
  return q * s
}

const ZETA3 = 1.2020569031595942

/**
 * The Bose–Einstein integral ∫ₓ^∞ t²/(eᵗ − 1) dt that sets the black-body photon flux above a gap (x = Eg/kT):
 * the series Σ e^(−kx)(x²/k + 2x/k² + 2/k³) for x ≥ 2, else 2ζ(3) − ∫₀ˣ by 80-point Gauss–Legendre.
 *
 * - `x`: reduced energy, dimensionless (≥ 0); result: dimensionless
 *
 * Source: termwise integration of t²·Σ e^(−kt) (e.g. W. Shockley, H. J. Queisser, J. Appl. Phys. 32, 510 (1961),
 * the function Q_g); ζ(3) = 1.2020569031595942.
 *
 * @example boseIntegral2(0) → 2ζ(3) = 2.4041138; boseIntegral2(40) → e^(−40)·1682 = 7.1457e-15
 */
export function boseIntegral2(x: number): number {
  if (x >= 2) {
    let s = 0
    for (let k = 1; k < 200; k++) {
      const term = Math.exp(-k * x) * ((x * x) / k + (2 * x) / (k * k) + 2 / (k * k * k))
      s += term
      if (term < 1e-17 * s) break
    }
    return s
  }
  const nodes = [-0.906179845938664, -0.5384693101056831, 0, 0.5384693101056831, 0.906179845938664]
  const weights = [0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665, 0.2369268850561891]
  const parts = 16
  let s = 0
  const hw = x / (2 * parts)
  for (let p = 0; p < parts; p++) {
    const mid = (2 * p + 1) * hw
    for (let j = 0; j < 5; j++) {
      const t = mid + hw * nodes[j]
      s += weights[j] * hw * (t === 0 ? 0 : (t * t) / Math.expm1(t))
    }
  }
  return 2 * ZETA3 - s
}

/** The quantities of one detailed-balance calculation (SI: A/m², V, W/m²). */
export interface DetailedBalanceResult {
  /** Short-circuit current density of the step absorber, A/m². */
  Jsc: number
  /** Radiative saturation current density (black body at Tcell above Eg into a hemisphere), A/m². */
  J0: number
  /** Open-circuit voltage kT/q·ln(1 + Jsc/J0), V. */
  Voc: number
  /** Voltage and current density at the maximum-power point. */
  Vmp: number
  Jmp: number
  /** Fill factor Vmp·Jmp/(Voc·Jsc). */
  FF: number
  /** Incident power ∫Φ·hc/λ dλ, W/m². */
  Pin: number
  /** Vmp·Jmp/Pin, 0–1. */
  efficiency: number
}

interface Spectrum {
  x: Float64Array // ascending wavelengths
  f: Float64Array // flux on x
  cum: Float64Array // ∫ from x[0] to x[i] of f
  Pin: number
}

function spectrumOf(fn: string, lambda: Num, flux: Num): Spectrum {
  const grid = gridOf(fn, lambda, [flux])
  if (typeof flux === 'number') throw rangeError(fn, 'needs the spectral photon flux as an array on the wavelength grid')
  const n = grid.length
  const descending = grid[n - 1] < grid[0]
  const x = new Float64Array(n)
  const f = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    const j = descending ? n - 1 - i : i
    x[i] = grid[j]
    f[i] = flux[j]
    if (!(x[i] > 0)) throw new ArgumentRangeError(`${fn}: wavelengths must be positive (got ${x[i]})`, fn, 'the wavelength lambda', 'positive', x[i], j)
    if (!Number.isFinite(f[i]) || f[i] < 0)
      throw new ArgumentRangeError(`${fn}: the photon flux must be finite and not negative (got ${f[i]} at ${x[i]} m)`, fn, 'the photon flux', 'finite and not negative', f[i], j)
    if (i > 0 && !(x[i] > x[i - 1])) throw rangeError(fn, 'the wavelength grid must be strictly increasing or strictly decreasing')
  }
  const cum = new Float64Array(n)
  let Pin = 0
  for (let i = 1; i < n; i++) {
    const dx = x[i] - x[i - 1]
    cum[i] = cum[i - 1] + 0.5 * dx * (f[i] + f[i - 1])
    Pin += 0.5 * dx * ((f[i] * HC) / x[i] + (f[i - 1] * HC) / x[i - 1])
  }
  return { x, f, cum, Pin }
}

/** Photons per m² per s at wavelengths up to lg (the trapezoid, with the last interval cut at lg by interpolation). */
function fluxBelow(s: Spectrum, lg: number): number {
  const { x, f, cum } = s
  const n = x.length
  if (lg <= x[0]) return 0
  if (lg >= x[n - 1]) return cum[n - 1]
  let lo = 0
  let hi = n - 1
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1
    if (x[mid] <= lg) lo = mid
    else hi = mid
  }
  const t = (lg - x[lo]) / (x[hi] - x[lo])
  const fg = f[lo] + t * (f[hi] - f[lo])
  return cum[lo] + 0.5 * (lg - x[lo]) * (f[lo] + fg)
}

function balance(s: Spectrum, Eg: number, Tcell: number): DetailedBalanceResult {
  const Jsc = q * fluxBelow(s, HC / Eg)
  const kt = kB * Tcell
  // π·∫_Eg^∞ (2E²/(h³c²)) / (e^(E/kT) − 1) dE = (2π/(h³c²))·(kT)³·∫_(Eg/kT)^∞ x²/(eˣ − 1) dx
  const J0 = ((q * 2 * Math.PI) / (h * h * h * c0 * c0)) * kt * kt * kt * boseIntegral2(Eg / kt)
  const Vt = kt / q
  const L = Math.log1p(Jsc / J0)
  // dP/dV = 0 for J = Jsc − J0(e^v − 1), v = qV/kT: e^v(1 + v) = 1 + Jsc/J0, i.e. v + ln(1 + v) = L (Newton)
  let v = L > 0 ? Math.max(L - Math.log1p(L), 1e-12) : 0
  for (let it = 0; it < 50 && L > 0; it++) {
    const g = v + Math.log1p(v) - L
    const step = g / (1 + 1 / (1 + v))
    v -= step
    if (Math.abs(step) <= 1e-15 * Math.max(1, v)) break
  }
  // at the optimum J0·e^v = (Jsc + J0)/(1 + v), so Jmp = (Jsc + J0)·v/(1 + v) with no cancellation
  const Jmp = ((Jsc + J0) * v) / (1 + v)
  const Vmp = Vt * v
  const Voc = Vt * L
  const Pmp = Vmp * Jmp
  return { Jsc, J0, Voc, Vmp, Jmp, FF: Jsc > 0 ? Pmp / (Voc * Jsc) : 0, Pin: s.Pin, efficiency: Pmp / s.Pin }
}

/**
 * All quantities of the detailed-balance limit of one step absorber (see detailedBalance), for one gap and one cell
 * temperature.
 *
 * @example shockleyQueisserPoint(1.34 eV, 300, λ, Φ of ASTM G173-03 AM1.5G) → efficiency 0.3368, Jsc 350.3 A/m²,
 *   Voc 1.082 V (see tests/shared/optics/spectra.test.ts)
 */
export function shockleyQueisserPoint(Eg: number, Tcell: number, lambda: Num, flux: Num): DetailedBalanceResult {
  if (!(Eg > 0)) throw rangeError('detailed_balance', `the gap Eg must be positive (got ${Eg})`)
  if (!(Tcell > 0)) throw rangeError('detailed_balance', `the cell temperature must be positive (got ${Tcell} K)`)
  return balance(spectrumOf('detailed_balance', lambda, flux), Eg, Tcell)
}

/**
 * Shockley–Queisser (detailed-balance) efficiency of a step absorber (A = 1 above Eg, 0 below) under the given
 * spectral photon flux: Jsc = q·∫_(λ ≤ hc/Eg) Φ dλ; radiative dark current J0 = q·π·∫_Eg^∞ 2E²/(h³c²)/(e^(E/kT) − 1) dE
 * of a black body at Tcell into a hemisphere; ideal diode J = Jsc − J0·(e^(qV/kT) − 1) at its maximum-power point
 * (solved exactly: v + ln(1 + v) = ln(1 + Jsc/J0)); divided by the incident power ∫Φ·hc/λ dλ on the grid.
 *
 * - `Eg`: gap, J (> 0; an array gives one efficiency per gap); `Tcell`: cell temperature, K (> 0, broadcasts with Eg)
 * - `lambda`: wavelength grid, m (array, increasing or decreasing); `flux`: spectral photon flux on that grid,
 *   photons m⁻² s⁻¹ per metre of wavelength (e.g. photon_flux(λ, irradiance))
 * - result: efficiency, fraction 0–1 (number for a scalar Eg and Tcell)
 *
 * Source: W. Shockley, H. J. Queisser, J. Appl. Phys. 32, 510 (1961); the AM1.5G form as in S. Rühle, Solar Energy
 * 130, 139 (2016) (33.7 % at 1.34 eV, 300 K).
 *
 * @example detailedBalance(1.34 eV, 300, λ, Φ) with the ASTM G173-03 global-tilt spectrum → 0.337
 */
export function detailedBalance(Eg: Num, Tcell: Num, lambda: Num, flux: Num): Num {
  check('detailed_balance', 'the gap Eg', Eg, positive, 'positive')
  check('detailed_balance', 'the cell temperature Tcell', Tcell, positive, 'positive (kelvin)')
  const s = spectrumOf('detailed_balance', lambda, flux)
  return map2(Eg, Tcell, (e, t) => balance(s, e, t).efficiency)
}

/** One quantity of the detailed-balance point for each (Eg, Tcell), sharing the spectrum's preparation. */
function balanceField(fn: string, Eg: Num, Tcell: Num, lambda: Num, flux: Num, pick: (r: DetailedBalanceResult) => number): Num {
  check(fn, 'the gap Eg', Eg, positive, 'positive')
  check(fn, 'the cell temperature Tcell', Tcell, positive, 'positive (kelvin)')
  const s = spectrumOf(fn, lambda, flux)
  return map2(Eg, Tcell, (e, t) => pick(balance(s, e, t)))
}

/**
 * Short-circuit current density of a step absorber (A = 1 above Eg) in the detailed-balance limit: every incident
 * photon above the gap gives one electron, Jsc = q·∫_(λ ≤ hc/Eg) Φ dλ (the last interval cut at hc/Eg). Same model
 * and arguments as detailedBalance; it does not depend on Tcell (which is still checked).
 *
 * - `Eg`: gap, J (> 0; an array gives one value per gap); `Tcell`: cell temperature, K (> 0)
 * - `lambda`: wavelength grid, m; `flux`: spectral photon flux on that grid, photons m⁻² s⁻¹ m⁻¹
 * - result: current density, A/m² (10 A/m² = 1 mA/cm²)
 *
 * Source: W. Shockley, H. J. Queisser, J. Appl. Phys. 32, 510 (1961); tabulated for AM1.5G by S. Rühle, Solar Energy
 * 130, 139 (2016) (about 34.5 mA/cm² at 1.34 eV; from memory).
 *
 * @example detailedBalanceJsc(1.34 eV, 300, λ, Φ of ASTM G173-03 AM1.5G) → 350.3 A/m² (35.0 mA/cm²)
 */
export function detailedBalanceJsc(Eg: Num, Tcell: Num, lambda: Num, flux: Num): Num {
  return balanceField('detailed_balance_jsc', Eg, Tcell, lambda, flux, (r) => r.Jsc)
}

/**
 * Open-circuit voltage of a step absorber in the detailed-balance limit, Voc = (kTcell/q)·ln(1 + Jsc/J0), with J0 the
 * radiative dark current of a black body at Tcell above Eg into a hemisphere (see detailedBalance). Same arguments.
 *
 * - `Eg`: gap, J (> 0); `Tcell`: cell temperature, K (> 0); `lambda`, `flux` as for detailedBalance
 * - result: voltage, V (0 when no photon is above the gap)
 *
 * Source: Shockley & Queisser (1961); Rühle, Solar Energy 130, 139 (2016) (about 1.07 V at 1.34 eV, AM1.5G, 300 K;
 * from memory).
 *
 * @example detailedBalanceVoc(1.34 eV, 300, λ, Φ of ASTM G173-03 AM1.5G) → 1.082 V
 */
export function detailedBalanceVoc(Eg: Num, Tcell: Num, lambda: Num, flux: Num): Num {
  return balanceField('detailed_balance_voc', Eg, Tcell, lambda, flux, (r) => r.Voc)
}

/**
 * Fill factor of a step absorber in the detailed-balance limit, FF = Vmp·Jmp/(Voc·Jsc), the ideal diode's
 * maximum-power point solved exactly (see detailedBalance). Same arguments.
 *
 * - `Eg`: gap, J (> 0); `Tcell`: cell temperature, K (> 0); `lambda`, `flux` as for detailedBalance
 * - result: fraction 0–1 (0 when no photon is above the gap)
 *
 * Source: Shockley & Queisser (1961); Rühle, Solar Energy 130, 139 (2016) (about 0.89 at 1.34 eV, AM1.5G, 300 K;
 * from memory).
 *
 * @example detailedBalanceFf(1.34 eV, 300, λ, Φ of ASTM G173-03 AM1.5G) → 0.889
 */
export function detailedBalanceFf(Eg: Num, Tcell: Num, lambda: Num, flux: Num): Num {
  return balanceField('detailed_balance_ff', Eg, Tcell, lambda, flux, (r) => r.FF)
}
