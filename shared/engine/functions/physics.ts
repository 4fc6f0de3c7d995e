/**
 * The physics groups of the function library (DESIGN §6), mapping each sheet name to the optics library's camelCase
 * function (shared/optics/index.ts, same argument order, SI in and out) and declaring how dimensions flow.
 *
 * Dimension notes: the Tauc prefactor B has the dimension ((1/length)·energy)^(1/r)/energy, which depends on the
 * value of r, so it is not checked. Cauchy's B and C are in m² and m⁴, Sellmeier's C in m² (SI wavelengths).
 */
import * as optics from '../../optics/index'
import type { Num } from '../../optics/num'
import {
  AREA, CURRENT_DENSITY, DIMENSIONLESS as D, ENERGY, ENERGY_PER_TEMPERATURE, FREQUENCY, INV_LENGTH, LENGTH,
  SPECTRAL_IRRADIANCE, SPECTRAL_PHOTON_FLUX, TEMPERATURE, VOLTAGE, dimPow,
} from '../dimensions'
import type { ArgDim, Builtin, ResultDim } from './spec'

type Fn = (...args: Num[]) => Num

/**
 * One library entry. `params` lists the argument names in order; a trailing `?` marks an optional argument.
 * `camel` is the optics export that implements it.
 */
function phys(
  name: string,
  camel: keyof typeof optics,
  group: string,
  params: string[],
  args: ArgDim[],
  result: ResultDim,
  doc: string,
): Builtin {
  const required = params.filter((p) => !p.endsWith('?')).length
  const impl = optics[camel] as unknown as Fn
  return {
    name,
    group,
    signature: `${name}(${params.map((p) => (p.endsWith('?') ? `[${p.slice(0, -1)}]` : p)).join(', ')})`,
    doc,
    params: params.map((p) => p.replace(/\?$/, '')),
    minArgs: required,
    maxArgs: params.length,
    args,
    result,
    impl: (xs) => impl(...xs),
  }
}

const E = ENERGY
const L = LENGTH
const T = TEMPERATURE
const IL = INV_LENGTH
const L4 = dimPow(LENGTH, 4)

export const PHYSICS: Builtin[] = [
  // photons
  phys('photon_energy', 'photonEnergy', 'photons', ['lambda'], [L], E, 'photon energy hc/λ of a vacuum wavelength, J'),
  phys('photon_wavelength', 'photonWavelength', 'photons', ['E'], [E], L, 'vacuum wavelength hc/E of a photon energy, m'),
  phys('wavenumber', 'wavenumber', 'photons', ['lambda'], [L], IL, 'wavenumber 1/λ, 1/m (show it in 1/cm)'),
  phys('photon_frequency', 'photonFrequency', 'photons', ['lambda'], [L], FREQUENCY, 'frequency c/λ, Hz'),
  phys('kT', 'kT', 'photons', ['T'], [T], E, 'thermal energy kB·T, J'),
  // band-edge absorption
  phys('alpha_tauc', 'alphaTauc', 'band-edge absorption', ['E', 'Eg', 'B', 'r'], [E, E, 'any', D], IL,
    'Tauc edge: (αE)^(1/r) = B(E − Eg) above Eg, 0 below; α in 1/m'),
  phys('alpha_direct', 'alphaDirect', 'band-edge absorption', ['E', 'Eg', 'B'], [E, E, 'any'], IL,
    'direct allowed edge, Tauc with r = 1/2; α in 1/m'),
  phys('alpha_indirect', 'alphaIndirect', 'band-edge absorption', ['E', 'Eg', 'B'], [E, E, 'any'], IL,
    'indirect allowed edge, Tauc with r = 2; α in 1/m'),
  phys('alpha_indirect_phonon', 'alphaIndirectPhonon', 'band-edge absorption', ['E', 'Eg', 'Ep', 'T', 'C'],
    [E, E, E, T, 'any'], IL, 'indirect edge with phonon absorption and emission branches; α in 1/m'),
  phys('alpha_urbach', 'alphaUrbach', 'band-edge absorption', ['E', 'alpha0', 'E0', 'Eu'], [E, IL, E, E], IL,
    'Urbach tail α0·exp((E − E0)/Eu); α in 1/m'),
  phys('alpha_edge', 'alphaEdge', 'band-edge absorption', ['E', 'Eg', 'B', 'r', 'Eu'], [E, E, 'any', D, E], IL,
    'Tauc edge above a junction energy, Urbach tail below, value and log-slope continuous; α in 1/m'),
  // optical constants
  phys('alpha_from_k', 'alphaFromK', 'optical constants', ['k', 'lambda'], [D, L], IL, 'absorption coefficient 4πk/λ, 1/m'),
  phys('k_from_alpha', 'kFromAlpha', 'optical constants', ['alpha', 'lambda'], [IL, L], D, 'extinction coefficient αλ/4π'),
  phys('n_from_eps', 'nFromEps', 'optical constants', ['eps1', 'eps2'], [D, D], D, 'refractive index n from ε1, ε2'),
  phys('k_from_eps', 'kFromEps', 'optical constants', ['eps1', 'eps2'], [D, D], D, 'extinction coefficient k from ε1, ε2'),
  phys('cauchy_n', 'cauchyN', 'optical constants', ['lambda', 'A', 'B', 'C'], [L, D, AREA, L4], D,
    'Cauchy index A + B/λ² + C/λ⁴ (B in m², C in m⁴)'),
  phys('sellmeier_n', 'sellmeierN', 'optical constants', ['lambda', 'B1', 'C1', 'B2', 'C2', 'B3', 'C3'],
    [L, D, AREA, D, AREA, D, AREA], D, 'Sellmeier index, three terms Bi·λ²/(λ² − Ci), Ci in m²'),
  phys('drude_eps1', 'drudeEps1', 'optical constants', ['E', 'Ep', 'gamma', 'eps_inf'], [E, E, E, D], D,
    'Drude free-carrier ε1 with plasma energy Ep and damping γ'),
  phys('drude_eps2', 'drudeEps2', 'optical constants', ['E', 'Ep', 'gamma', 'eps_inf'], [E, E, E, D], D,
    'Drude free-carrier ε2 with plasma energy Ep and damping γ'),
  phys('tauc_lorentz_eps2', 'taucLorentzEps2', 'optical constants', ['E', 'A', 'E0', 'C', 'Eg'], [E, E, E, E, E], D,
    'Tauc–Lorentz ε2 (amplitude A, peak E0, broadening C, gap Eg, all energies)'),
  phys('tauc_lorentz_eps1', 'taucLorentzEps1', 'optical constants', ['E', 'A', 'E0', 'C', 'Eg', 'eps_inf'],
    [E, E, E, E, E, D], D, 'Tauc–Lorentz ε1, the Kramers–Kronig partner of ε2, plus ε∞'),
  // films and slabs
  phys('reflectance', 'reflectance', 'films and slabs', ['n', 'k', 'n0?'], [D, D, D], D,
    'normal-incidence reflectance of a surface from an ambient of index n0 (default 1, air)'),
  phys('absorbed_fraction', 'absorbedFraction', 'films and slabs', ['alpha', 'd'], [IL, L], D,
    'single-pass absorbed fraction 1 − exp(−αd)'),
  phys('absorption_depth', 'absorptionDepth', 'films and slabs', ['alpha'], [IL], L, 'absorption depth 1/α, m'),
  phys('thickness_for', 'thicknessFor', 'films and slabs', ['alpha', 'fraction'], [IL, D], L,
    'thickness absorbing a given fraction in one pass, −ln(1 − f)/α, m'),
  phys('transmittance_slab', 'transmittanceSlab', 'films and slabs', ['alpha', 'd', 'R'], [IL, L, D], D,
    'transmittance of an incoherent slab with multiple reflections, surface reflectance R'),
  phys('reflectance_slab', 'reflectanceSlab', 'films and slabs', ['alpha', 'd', 'R'], [IL, L, D], D,
    'reflectance of an incoherent slab with multiple reflections'),
  phys('absorptance_slab', 'absorptanceSlab', 'films and slabs', ['alpha', 'd', 'R'], [IL, L, D], D,
    'absorptance of an incoherent slab with multiple reflections'),
  phys('alpha_from_transmittance', 'alphaFromTransmittance', 'films and slabs', ['T', 'R', 'd'], [D, D, L], IL,
    'α from a slab transmittance (exact inverse of transmittance_slab), 1/m'),
  phys('alpha_from_absorbance', 'alphaFromAbsorbance', 'films and slabs', ['A10', 'd'], [D, L], IL,
    'α from a decadic absorbance, ln(10)·A10/d, 1/m'),
  phys('absorptance_lambertian', 'absorptanceLambertian', 'films and slabs', ['alpha', 'd', 'n'], [IL, L, D], D,
    'absorptance with a randomising front and perfect rear mirror (→ 4n²αd when weak)'),
  phys('film_reflectance', 'filmReflectance', 'films and slabs', ['lambda', 'n', 'k', 'd', 'n_sub'], [L, D, D, L, D], D,
    'reflectance of one coherent film on a transparent substrate (transfer-matrix method)'),
  phys('film_transmittance', 'filmTransmittance', 'films and slabs', ['lambda', 'n', 'k', 'd', 'n_sub'], [L, D, D, L, D], D,
    'transmittance into the substrate of one coherent film (transfer-matrix method)'),
  // temperature
  phys('varshni', 'varshni', 'temperature', ['T', 'Eg0', 'a', 'b'], [T, E, ENERGY_PER_TEMPERATURE, T], E,
    'Varshni band gap Eg0 − aT²/(T + b), J'),
  // spectra and devices
  phys('planck_photon_radiance', 'planckPhotonRadiance', 'spectra and devices', ['lambda', 'T'], [L, T], SPECTRAL_PHOTON_FLUX,
    'black-body photon radiance, photons m⁻² s⁻¹ sr⁻¹ per metre of wavelength'),
  phys('photon_flux', 'photonFlux', 'spectra and devices', ['lambda', 'irradiance'], [L, SPECTRAL_IRRADIANCE], SPECTRAL_PHOTON_FLUX,
    'spectral photon flux Iλ·λ/(hc) of a spectral irradiance'),
  phys('photocurrent', 'photocurrent', 'spectra and devices', ['lambda', 'absorptance', 'flux'], [L, D, SPECTRAL_PHOTON_FLUX],
    CURRENT_DENSITY, 'photocurrent density q∫A·Φ dλ, A/m²'),
  phys('detailed_balance', 'detailedBalance', 'spectra and devices', ['Eg', 'T_cell', 'lambda', 'flux'], [E, T, L, SPECTRAL_PHOTON_FLUX],
    D, 'Shockley–Queisser efficiency (fraction) of a step absorber under that spectral photon flux'),
  phys('detailed_balance_jsc', 'detailedBalanceJsc', 'spectra and devices', ['Eg', 'T_cell', 'lambda', 'flux'], [E, T, L, SPECTRAL_PHOTON_FLUX],
    CURRENT_DENSITY, 'detailed-balance short-circuit current density of a step absorber, A/m²'),
  phys('detailed_balance_voc', 'detailedBalanceVoc', 'spectra and devices', ['Eg', 'T_cell', 'lambda', 'flux'], [E, T, L, SPECTRAL_PHOTON_FLUX],
    VOLTAGE, 'detailed-balance open-circuit voltage of a step absorber, V'),
  phys('detailed_balance_ff', 'detailedBalanceFf', 'spectra and devices', ['Eg', 'T_cell', 'lambda', 'flux'], [E, T, L, SPECTRAL_PHOTON_FLUX],
    D, 'detailed-balance fill factor (fraction) of a step absorber'),
]
