/**
 * Band-edge absorption: Tauc power laws for direct and indirect allowed transitions, the phonon-assisted indirect
 * edge, the exponential Urbach tail, and the joined edge model used by sheets (Tauc above a junction energy, Urbach
 * below it). All SI: photon energies in J, α in 1/m.
 */
import type { Num } from './num'
import { map4, map5, check, positive, nonNegative } from './broadcast'
import { kB } from './constants'

/** (B·x)^r / E with the common exponents special-cased (exact for r = 1/2 and r = 2). */
function taucPower(Bx: number, r: number): number {
  if (r === 0.5) return Math.sqrt(Bx)
  if (r === 2) return Bx * Bx
  if (r === 1) return Bx
  return Math.pow(Bx, r)
}

function tauc1(E: number, Eg: number, B: number, r: number): number {
  return E > Eg ? taucPower(B * (E - Eg), r) / E : 0
}

/**
 * Tauc power-law absorption edge: (αE)^(1/r) = B·(E − Eg) above the gap, α = 0 at and below it; so
 * α = (B·(E − Eg))^r / E.
 *
 * - `E`: photon energy, J (> 0)
 * - `Eg`: optical gap, J (≥ 0)
 * - `B`: Tauc coefficient, J^(1/r − 1)·m^(−1/r) (≥ 0); for r = 1/2 that is J/m², for r = 2 it is 1/(J·m^(1/2))
 * - `r`: exponent (> 0): 1/2 direct allowed, 3/2 direct forbidden, 2 indirect allowed, 3 indirect forbidden
 * - result: absorption coefficient α, 1/m
 *
 * Source: J. Tauc, R. Grigorovici, A. Vancu, phys. stat. sol. 15, 627 (1966); exponents as in
 * J. I. Pankove, Optical Processes in Semiconductors (Dover 1971), ch. 3 (absorption edges).
 *
 * @example alphaTauc(1.6 eV, 1.5 eV, 4e9 eV/cm², 0.5) = alphaTauc(2.5634826e-19, 2.4032649e-19, 6.4087065e-6, 0.5)
 *   → 1.25e6 1/m (1.25e4 cm⁻¹): √(4e9·0.1) eV/cm / 1.6 eV = 2e4/1.6 cm⁻¹
 */
export function alphaTauc(E: Num, Eg: Num, B: Num, r: Num): Num {
  return tauc('alpha_tauc', E, Eg, B, r)
}

function tauc(fn: string, E: Num, Eg: Num, B: Num, r: Num): Num {
  check(fn, 'the exponent r', r, positive, 'positive')
  check(fn, 'the coefficient B', B, nonNegative, 'zero or positive')
  check(fn, 'the gap Eg', Eg, nonNegative, 'zero or positive')
  if (typeof E !== 'number' && typeof Eg === 'number' && typeof B === 'number' && typeof r === 'number') {
    const out = new Float64Array(E.length)
    for (let i = 0; i < out.length; i++) {
      const e = E[i]
      out[i] = e > Eg ? taucPower(B * (e - Eg), r) / e : 0
    }
    return out
  }
  return map4(E, Eg, B, r, tauc1)
}

/**
 * Direct allowed absorption edge, α = √(B·(E − Eg)) / E above Eg, 0 below: alphaTauc with r = 1/2.
 *
 * - `E`: photon energy, J (> 0); `Eg`: direct gap, J (≥ 0); `B`: J/m² (≥ 0; so (αE)² = B·(E − Eg))
 * - result: α, 1/m
 *
 * Source: Pankove, Optical Processes in Semiconductors (1971), ch. 3 (α ∝ (hν − Eg)^(1/2)), written in Tauc form.
 *
 * @example alphaDirect(1.6 eV, 1.5 eV, 4e9 eV/cm²) → 1.25e6 1/m (1.25e4 cm⁻¹)
 */
export function alphaDirect(E: Num, Eg: Num, B: Num): Num {
  return tauc('alpha_direct', E, Eg, B, 0.5)
}

/**
 * Indirect allowed absorption edge, α = (B·(E − Eg))² / E above Eg, 0 below: alphaTauc with r = 2.
 *
 * - `E`: photon energy, J (> 0); `Eg`: indirect gap, J (≥ 0); `B`: 1/(J·m^(1/2)) (≥ 0; so (αE)^(1/2) = B·(E − Eg))
 * - result: α, 1/m
 *
 * Source: Tauc et al., phys. stat. sol. 15, 627 (1966); Pankove (1971), ch. 3 (indirect transitions).
 *
 * @example alphaIndirect(1.2 eV, 1.1 eV, B) with B = 1e3 /√(eV·cm) → 1e4/1.2 cm⁻¹ = 8.333e5 1/m
 */
export function alphaIndirect(E: Num, Eg: Num, B: Num): Num {
  return tauc('alpha_indirect', E, Eg, B, 2)
}

function indirectPhonon1(E: number, Eg: number, Ep: number, T: number, C: number): number {
  let a = 0
  const above = E - Eg + Ep
  if (above > 0) {
    // Bose–Einstein occupation N = 1/(e^(Ep/kT) − 1); 0 at T = 0 (expm1(∞) = ∞).
    const N = 1 / Math.expm1(Ep / (kB * T))
    a += C * N * above * above
  }
  const em = E - Eg - Ep
  if (em > 0) {
    // emission goes with N + 1 = 1/(1 − e^(−Ep/kT)); 1 at T = 0.
    a += (C * em * em) / -Math.expm1(-Ep / (kB * T))
  }
  return a
}

/**
 * Phonon-assisted indirect absorption edge with its two branches:
 * α = α_a + α_e, α_a = C·N·(E − Eg + Ep)² for E > Eg − Ep (phonon absorbed),
 * α_e = C·(N + 1)·(E − Eg − Ep)² for E > Eg + Ep (phonon emitted), N = 1/(exp(Ep/kT) − 1) (Bose–Einstein).
 *
 * - `E`: photon energy, J; `Eg`: indirect gap, J; `Ep`: energy of the assisting phonon, J (> 0)
 * - `T`: lattice temperature, K (≥ 0; at 0 K only the emission branch remains)
 * - `C`: strength, 1/(m·J²) (≥ 0)
 * - result: α, 1/m
 *
 * Source: G. G. Macfarlane, V. Roberts, Phys. Rev. 97, 1714 (1955); Pankove (1971), ch. 3 (indirect transitions).
 *
 * @example alphaIndirectPhonon(1.2 eV, 1.1 eV, 0.05 eV, 300, C) with C = 1e4 cm⁻¹/eV²: N = 0.1690, N + 1 = 1.1690,
 *   so α = 1e4·(0.1690·0.15² + 1.1690·0.05²) cm⁻¹ = 67.246 cm⁻¹ = 6724.60 1/m
 */
export function alphaIndirectPhonon(E: Num, Eg: Num, Ep: Num, T: Num, C: Num): Num {
  check('alpha_indirect_phonon', 'the phonon energy Ep', Ep, positive, 'positive')
  check('alpha_indirect_phonon', 'the temperature T', T, nonNegative, 'zero or positive (kelvin)')
  check('alpha_indirect_phonon', 'the strength C', C, nonNegative, 'zero or positive')
  return map5(E, Eg, Ep, T, C, indirectPhonon1)
}

function urbach1(E: number, alpha0: number, E0: number, Eu: number): number {
  return alpha0 * Math.exp((E - E0) / Eu)
}

/**
 * Urbach (exponential) absorption tail, α = α0·exp((E − E0)/Eu).
 *
 * - `E`: photon energy, J; `alpha0`: α at E = E0, 1/m (≥ 0); `E0`: reference energy, J
 * - `Eu`: Urbach energy (tail width), J (> 0)
 * - result: α, 1/m
 *
 * Source: F. Urbach, Phys. Rev. 92, 1324 (1953).
 *
 * @example alphaUrbach(1.45 eV, 1e4 cm⁻¹, 1.5 eV, 25 meV) → 1e6·e^(−2) 1/m = 1.3533528e5 1/m
 */
export function alphaUrbach(E: Num, alpha0: Num, E0: Num, Eu: Num): Num {
  check('alpha_urbach', 'the Urbach energy Eu', Eu, positive, 'positive')
  check('alpha_urbach', 'alpha0', alpha0, nonNegative, 'zero or positive')
  if (typeof E !== 'number' && typeof alpha0 === 'number' && typeof E0 === 'number' && typeof Eu === 'number') {
    const out = new Float64Array(E.length)
    const inv = 1 / Eu
    for (let i = 0; i < out.length; i++) out[i] = alpha0 * Math.exp((E[i] - E0) * inv)
    return out
  }
  return map4(E, alpha0, E0, Eu, urbach1)
}

/**
 * Distance δ = Ej − Eg from the gap to the junction energy of alphaEdge, where the Tauc log-slope equals 1/Eu.
 *
 * The Tauc branch α_T = (B(E − Eg))^r / E has d ln α_T / dE = r/(E − Eg) − 1/E. Setting that to 1/Eu with
 * E = Eg + δ and multiplying by Eu·δ·(Eg + δ) > 0 gives δ² + (Eg + (1 − r)·Eu)·δ − r·Eu·Eg = 0. Its constant term is
 * negative, so it has exactly one positive root; the log-slope falls from +∞ at Eg to below 1/Eu far above, so that
 * root is the only junction: δ = 2·r·Eu·Eg / (p + √(p² + 4·r·Eu·Eg)), p = Eg + (1 − r)·Eu (the cancellation-free form
 * of (−p + √(p² + 4rEuEg))/2, used when p > 0). For Eu ≪ Eg, δ ≈ r·Eu. B drops out: the junction does not depend on it.
 *
 * - all energies in J; Eg > 0, r > 0, Eu > 0. Result in J.
 *
 * @example edgeJunctionOffset(1.48 eV, 0.5, 22 meV) → 0.0108400 eV (≈ r·Eu = 11 meV)
 */
export function edgeJunctionOffset(Eg: number, r: number, Eu: number): number {
  const p = Eg + (1 - r) * Eu
  const disc = Math.sqrt(p * p + 4 * r * Eu * Eg)
  return p > 0 ? (2 * r * Eu * Eg) / (p + disc) : (disc - p) / 2
}

function edge1(E: number, Eg: number, B: number, r: number, Eu: number): number {
  if (Eu === 0) return tauc1(E, Eg, B, r)
  const d = edgeJunctionOffset(Eg, r, Eu)
  const Ej = Eg + d
  if (E >= Ej) return taucPower(B * (E - Eg), r) / E
  return (taucPower(B * d, r) / Ej) * Math.exp((E - Ej) * (1 / Eu))
}

/**
 * Band edge with an Urbach tail: the Tauc form (αE)^(1/r) = B·(E − Eg) at and above the junction energy
 * Ej = Eg + δ, and an exponential α(Ej)·exp((E − Ej)/Eu) below it. α and d(ln α)/dE are both continuous at Ej,
 * where the Tauc log-slope r/(E − Eg) − 1/E equals 1/Eu; δ is the positive root of
 * δ² + (Eg + (1 − r)Eu)·δ − r·Eu·Eg = 0 (derivation at edgeJunctionOffset). Eu = 0 gives the bare Tauc edge.
 *
 * - `E`: photon energy, J (> 0); `Eg`: gap, J (> 0); `B`: Tauc coefficient as in alphaTauc (≥ 0)
 * - `r`: Tauc exponent (> 0); `Eu`: Urbach energy, J (≥ 0)
 * - result: α, 1/m
 *
 * Source: Tauc form (Tauc et al., phys. stat. sol. 15, 627 (1966)) joined to the Urbach rule (F. Urbach, Phys. Rev. 92,
 * 1324 (1953)) with value and slope matched, as in the edge models of G. D. Cody et al., Phys. Rev. Lett. 47, 1480
 * (1981) — here with the junction solved in closed form.
 *
 * @example alphaEdge(1.5 eV, 1.48 eV, 4e9 eV/cm², 0.5, 22 meV) → 5.96285e5 1/m: the junction is at
 *   1.48 + 0.010840 eV, so 1.5 eV is on the Tauc branch, √(4e9·0.02)/1.5 cm⁻¹ = 5962.85 cm⁻¹
 */
export function alphaEdge(E: Num, Eg: Num, B: Num, r: Num, Eu: Num): Num {
  check('alpha_edge', 'the gap Eg', Eg, positive, 'positive')
  check('alpha_edge', 'the coefficient B', B, nonNegative, 'zero or positive')
  check('alpha_edge', 'the exponent r', r, positive, 'positive')
  check('alpha_edge', 'the Urbach energy Eu', Eu, nonNegative, 'zero or positive')
  if (typeof Eg === 'number' && typeof B === 'number' && typeof r === 'number' && typeof Eu === 'number') {
    if (typeof E === 'number') return edge1(E, Eg, B, r, Eu)
    const n = E.length
    const out = new Float64Array(n)
    if (Eu === 0) {
      for (let i = 0; i < n; i++) {
        const e = E[i]
        out[i] = e > Eg ? taucPower(B * (e - Eg), r) / e : 0
      }
      return out
    }
    const d = edgeJunctionOffset(Eg, r, Eu)
    const Ej = Eg + d
    const aj = taucPower(B * d, r) / Ej
    const inv = 1 / Eu
    if (r === 0.5) {
      for (let i = 0; i < n; i++) {
        const e = E[i]
        out[i] = e >= Ej ? Math.sqrt(B * (e - Eg)) / e : aj * Math.exp((e - Ej) * inv)
      }
    } else if (r === 2) {
      for (let i = 0; i < n; i++) {
        const e = E[i]
        const x = B * (e - Eg)
        out[i] = e >= Ej ? (x * x) / e : aj * Math.exp((e - Ej) * inv)
      }
    } else {
      for (let i = 0; i < n; i++) {
        const e = E[i]
        out[i] = e >= Ej ? Math.pow(B * (e - Eg), r) / e : aj * Math.exp((e - Ej) * inv)
      }
    }
    return out
  }
  return map5(E, Eg, B, r, Eu, edge1)
}
