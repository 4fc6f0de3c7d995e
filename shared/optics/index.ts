/**
 * The physics library of DESIGN §6 (all groups but "grids and arrays", which the engine owns), in camelCase with the
 * same argument order as the sheet names: photon_energy → photonEnergy, alpha_edge → alphaEdge, … SI in and out;
 * arguments Num (number | Float64Array), results Num (scalars in → number, any array in → Float64Array).
 */
export type { Num } from './num'
export { isArray, broadcastLength, map1, map2, mapN, at, toArray } from './num'
export * as constants from './constants'
export { photonEnergy, photonWavelength, wavenumber, photonFrequency, kT } from './photons'
export {
  alphaTauc, alphaDirect, alphaIndirect, alphaIndirectPhonon, alphaUrbach, alphaEdge, edgeJunctionOffset,
} from './absorption'
export {
  reflectance, absorbedFraction, absorptionDepth, thicknessFor, transmittanceSlab, reflectanceSlab, absorptanceSlab,
  alphaFromTransmittance, alphaFromAbsorbance, absorptanceLambertian,
} from './slabs'
export {
  alphaFromK, kFromAlpha, nFromEps, kFromEps, cauchyN, sellmeierN, drudeEps1, drudeEps2, taucLorentzEps2,
  taucLorentzEps1,
} from './opticalConstants'
export { filmReflectance, filmTransmittance } from './films'
export { tmmNormal } from './tmm'
export type { TmmLayer, TmmResult } from './tmm'
export { varshni } from './temperature'
export {
  planckPhotonRadiance, photonFlux, photocurrent, detailedBalance, shockleyQueisserPoint, boseIntegral2,
} from './spectra'
export type { DetailedBalanceResult } from './spectra'
export { tmm, solveTmmPoint, tmmPoint } from './tmm'
export type { TmmOptions, TmmPoint } from './tmm'
export { stackResponse } from './stack'
export type { StackPolarization, StackSubstrate, StackResult } from './stack'
