/**
 * The library catalog for the formula editor's autocomplete and the help page: every function with its signature,
 * one-line doc and group; the unit names formulas may use; the constants.
 */
import { LIBRARY } from './functions/registry'
import { CONSTANTS } from './names'
import { FORMULA_UNIT_NAMES } from './units'

export interface CatalogFunction {
  name: string
  signature: string
  doc: string
  group: string
}

export interface Catalog {
  functions: CatalogFunction[]
  /** Unit names usable in formulas (`850*nm`); display units accept these and compounds such as `mA/cm^2`. */
  units: string[]
  constants: { name: string; doc: string }[]
}

export function libraryCatalog(): Catalog {
  return {
    functions: LIBRARY.map((f) => ({ name: f.name, signature: f.signature, doc: f.doc, group: f.group })),
    units: [...FORMULA_UNIT_NAMES],
    constants: [...CONSTANTS].map(([name, c]) => ({ name, doc: c.doc })),
  }
}
