/**
 * Built-in names of the formula language other than functions: physical constants (CODATA 2018, from
 * shared/optics/constants.ts), `pi`, `euler`, and the unit constants of units.ts. `E` is deliberately free for users.
 */
import * as K from '../optics/constants'
import {
  DIMENSIONLESS, ENERGY, ENERGY_PER_TEMPERATURE, CHARGE, MASS, dimDiv, dimMul, LENGTH, TIME, namedDim, type Dim,
} from './dimensions'
import { formulaUnitTable } from './units'

export interface NamedConstant {
  value: number
  dim: Dim
  doc: string
}

const VELOCITY: Dim = dimDiv(LENGTH, TIME)

/** Physical and mathematical constants, SI. */
export const CONSTANTS: ReadonlyMap<string, NamedConstant> = new Map([
  ['pi', { value: Math.PI, dim: DIMENSIONLESS, doc: 'π = 3.14159…' }],
  ['euler', { value: Math.E, dim: DIMENSIONLESS, doc: "Euler's number e = 2.71828… (E is left free for photon energies)" }],
  ['h', { value: K.h, dim: dimMul(ENERGY, TIME), doc: 'Planck constant, 6.62607015e-34 J s (exact, CODATA 2018)' }],
  ['hbar', { value: K.hbar, dim: dimMul(ENERGY, TIME), doc: 'reduced Planck constant h/2π, J s' }],
  ['c0', { value: K.c0, dim: VELOCITY, doc: 'speed of light in vacuum, 299792458 m/s (exact)' }],
  ['q', { value: K.q, dim: CHARGE, doc: 'elementary charge, 1.602176634e-19 C (exact)' }],
  ['kB', { value: K.kB, dim: ENERGY_PER_TEMPERATURE, doc: 'Boltzmann constant, 1.380649e-23 J/K (exact)' }],
  ['eps0', { value: K.eps0, dim: namedDim('permittivity'), doc: 'vacuum permittivity, 8.8541878128e-12 F/m (CODATA 2018)' }],
  ['me', { value: K.me, dim: MASS, doc: 'electron rest mass, 9.1093837015e-31 kg (CODATA 2018)' }],
])

export type BuiltinName = { kind: 'constant' | 'unit'; value: number; dim: Dim }

/** A constant or unit by name, or undefined. Own-property lookups only: no prototype name ever resolves. */
export function builtinName(name: string): BuiltinName | undefined {
  const c = CONSTANTS.get(name)
  if (c) return { kind: 'constant', value: c.value, dim: c.dim }
  const u = formulaUnitTable().get(name)
  if (u) return { kind: 'unit', value: u.factor, dim: u.dim }
  return undefined
}
