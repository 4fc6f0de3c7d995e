/**
 * Display units: parsing strings such as `nm`, `eV`, `1/cm`, `cm^-1`, `mA/cm^2`, `W/m^2/nm`, `%` or `K` into an SI
 * factor and a dimension, and the unit names usable as constants in formulas (`850*nm`, `1.48*eV`).
 *
 * Single units and their SI prefixes come from js-quantities (its definitions table, with CODATA 2018's exact
 * electronvolt). Compound units are split here into factors first, because js-quantities accepts only one `/`
 * (`W/m^2/nm` is not understood by it) and no parentheses.
 */
import Qty from 'js-quantities'
import { DIMENSIONLESS, TEMPERATURE, LENGTH, dimDiv, dimMul, dimPow, type Dim } from './dimensions'

export interface UnitInfo {
  /** SI value of one display unit: `nm` → 1e-9. */
  factor: number
  dim: Dim
}
export type UnitParse = ({ ok: true } & UnitInfo) | { ok: false; error: string }

/**
 * Units js-quantities lacks, and why: it has no plain `K` (it spells the kelvin `degK`/`tempK`) and no `Å`
 * (it has `ang`).
 */
const EXTRA: Record<string, UnitInfo> = {
  K: { factor: 1, dim: TEMPERATURE },
  'Å': { factor: 1e-10, dim: LENGTH },
}

/** js-quantities base units → position in the engine's dimension vector; angles and solid angles count as 1. */
const BASE_INDEX: Record<string, number> = {
  '<meter>': 0, '<kilogram>': 1, '<second>': 2, '<ampere>': 3, '<kelvin>': 4, '<mole>': 5, '<candela>': 6,
}
const DIMENSIONLESS_BASES = new Set(['<1>', '<radian>', '<steradian>'])
/** Temperature scales with an offset: a value in °C is not a factor times kelvin. */
const OFFSET_SCALES = new Set(['<celsius>', '<fahrenheit>', '<rankine>', '<temp-K>', '<temp-C>', '<temp-F>', '<temp-R>'])

/**
 * Spellings of arbitrary units (detector counts, intensities in a.u.): dimensionless, factor 1. Without this, `au`
 * would read as atto-(atomic mass unit) and `a.u.` not at all.
 */
const ARBITRARY = new Set(['a.u.', 'au', 'arb', 'arb.', 'arb. u.', 'arb.u.', 'arb. units', 'arbitrary units', 'counts', 'cts'])

const atomCache = new Map<string, UnitParse>()

function atom(name: string): UnitParse {
  const cached = atomCache.get(name)
  if (cached) return cached
  const result = resolveAtom(name)
  atomCache.set(name, result)
  return result
}

function resolveAtom(name: string): UnitParse {
  if (Object.hasOwn(EXTRA, name)) return { ok: true, ...EXTRA[name] }
  if (!/^[A-Za-z%µμΩ°]+[0-9]*$/.test(name)) return { ok: false, error: `"${name}" is not a unit` }
  const q = Qty.parse(name)
  if (!q) return { ok: false, error: `unknown unit "${name}"` }
  const own = [...q.numerator, ...q.denominator]
  if (own.some((u) => OFFSET_SCALES.has(u)))
    return { ok: false, error: `"${name}" is a temperature scale with an offset; write temperatures in K` }
  const base = q.toBase()
  const dim = [0, 0, 0, 0, 0, 0, 0]
  for (const [list, sign] of [[base.numerator, 1], [base.denominator, -1]] as const) {
    for (const u of list) {
      if (DIMENSIONLESS_BASES.has(u)) continue
      if (!Object.hasOwn(BASE_INDEX, u)) return { ok: false, error: `"${name}" is not a physical unit` }
      dim[BASE_INDEX[u]] += sign
    }
  }
  return { ok: true, factor: base.scalar, dim: dim as unknown as Dim }
}

const unitCache = new Map<string, UnitParse>()

/**
 * Parses a display unit into its SI factor and dimension. Accepts products and quotients of units with optional
 * integer, decimal or parenthesised fractional powers and parentheses: `1/cm`, `cm^-1`, `cm^(-1/2)`, `mA/cm^2`,
 * `W/m^2/nm` (= W·m⁻²·nm⁻¹), `eV/cm^2`, `1/(m^2*s*nm)`, `%`. The empty string is dimensionless with factor 1.
 * `cm^-1/2` is refused as ambiguous rather than read as (cm^-1)/2; `a.u.`, `arb. u.` and `counts` are dimensionless.
 * Example: parseUnit('mA/cm^2') → { ok: true, factor: 10, dim: current density }.
 */
export function parseUnit(text: string): UnitParse {
  const cached = unitCache.get(text)
  if (cached) return cached
  let result: UnitParse
  try {
    result = ARBITRARY.has(text.trim().toLowerCase()) ? { ok: true, factor: 1, dim: DIMENSIONLESS } : new UnitParser(text).parse()
    if (result.ok) result = { ...result, factor: snap(result.factor) }
  } catch (err) {
    result = { ok: false, error: unitProblem(text, (err as Error).message) }
  }
  if (unitCache.size > 2000) unitCache.clear()
  unitCache.set(text, result)
  return result
}

/**
 * What is wrong with a unit text, as the end of a sentence that starts "the unit …": `"flurbs" is not a known unit;
 * …`, `"W/m^2/q" contains "q", which is not a known unit`, `"m^" is not understood: expected a number after ^ …`.
 */
function unitProblem(text: string, problem: string): string {
  const whole = JSON.stringify(text.trim())
  if (problem === `unknown unit ${whole}`)
    return `${whole} is not a known unit; write units such as nm, eV, 1/cm, mA/cm^2 or W/m^2/nm`
  if (problem.startsWith(whole)) return problem
  const part = /^unknown unit (".*")$/.exec(problem)
  if (part) return `${whole} contains ${part[1]}, which is not a known unit`
  return `${whole} is not understood: ${problem}`
}

/**
 * Rounds a factor to 15 significant digits, removing the noise of prefix arithmetic (1e-3 × 1.602176634e-19 is
 * 1.6021766339999998e-22 in binary floating point). No unit definition carries more than 15 digits.
 */
function snap(x: number): number {
  return Number(x.toPrecision(15))
}

class UnitParser {
  private pos = 0
  constructor(private readonly text: string) {}

  parse(): UnitParse {
    if (this.text.trim() === '') return { ok: true, factor: 1, dim: DIMENSIONLESS }
    const r = this.product()
    this.space()
    if (this.pos < this.text.length) throw new Error(`unexpected "${this.text[this.pos]}"`)
    return { ok: true, ...r }
  }

  private space(): void {
    while (this.text[this.pos] === ' ') this.pos++
  }

  private product(): UnitInfo {
    let acc = this.power()
    for (;;) {
      this.space()
      const c = this.text[this.pos]
      if (c === '*' || c === '·' || c === '.') {
        this.pos++
        const r = this.power()
        acc = { factor: acc.factor * r.factor, dim: dimMul(acc.dim, r.dim) }
      } else if (c === '/') {
        this.pos++
        this.space()
        // `cm^-1/2` reads as (cm^-1)/2 by precedence but is almost always meant as cm^(-1/2): refuse to guess
        if (/[0-9]/.test(this.text[this.pos] ?? '') && /\^\s*[-+]?\d+(\.\d+)?\s*$/.test(this.text.slice(0, this.pos - 1)))
          throw new Error(`a number after "/" following a power is ambiguous: write the power in parentheses, e.g. cm^(-1/2)`)
        const r = this.power()
        acc = { factor: acc.factor / r.factor, dim: dimDiv(acc.dim, r.dim) }
      } else return acc
    }
  }

  private power(): UnitInfo {
    const base = this.primary()
    this.space()
    if (this.text[this.pos] !== '^') return base
    this.pos++
    this.space()
    // a power is a number, or a fraction in parentheses: cm^2, cm^-1, cm^0.5, cm^(1/2), cm^(-1/2)
    const m = /^[-+]?\d+(\.\d+)?/.exec(this.text.slice(this.pos)) ?? /^\(\s*([-+]?\d+)\s*\/\s*(\d+)\s*\)/.exec(this.text.slice(this.pos))
    if (!m) throw new Error('expected a number after ^, or a fraction in parentheses such as ^(1/2)')
    this.pos += m[0].length
    const p = m[0].startsWith('(') ? Number(m[1]) / Number(m[2]) : Number(m[0])
    if (!Number.isFinite(p)) throw new Error(`the power ${m[0]} is not a number`)
    return { factor: p < 0 ? 1 / base.factor ** -p : base.factor ** p, dim: dimPow(base.dim, p) }
  }

  private primary(): UnitInfo {
    this.space()
    if (this.text[this.pos] === '(') {
      this.pos++
      const r = this.product()
      this.space()
      if (this.text[this.pos] !== ')') throw new Error('missing ")"')
      this.pos++
      return r
    }
    const num = /^\d+(\.\d+)?([eE][-+]?\d+)?/.exec(this.text.slice(this.pos))
    if (num) {
      this.pos += num[0].length
      return { factor: Number(num[0]), dim: DIMENSIONLESS }
    }
    const name = /^[A-Za-z%µμΩ°Å]+[0-9]*/.exec(this.text.slice(this.pos))
    if (!name) throw new Error(this.pos >= this.text.length ? 'ends early' : `unexpected "${this.text[this.pos]}"`)
    this.pos += name[0].length
    const r = atom(name[0])
    if (!r.ok) throw new Error(r.error.replace(/^unit /, ''))
    return { factor: r.factor, dim: r.dim }
  }
}

/**
 * Unit names usable in formulas as SI constants (`850*nm`). Their values come from `parseUnit`, so a formula's `nm`
 * and a display unit `nm` agree exactly. `um` stands for micrometres (identifiers are ASCII).
 */
export const FORMULA_UNIT_NAMES: readonly string[] = [
  'm', 'km', 'cm', 'mm', 'um', 'nm', 'pm', 'angstrom',
  'J', 'mJ', 'uJ', 'eV', 'meV', 'keV',
  's', 'ms', 'us', 'ns', 'ps', 'fs',
  'Hz', 'kHz', 'MHz', 'GHz', 'THz',
  'K',
  'W', 'kW', 'mW', 'uW', 'nW',
  'A', 'mA', 'uA', 'nA',
  'V', 'mV',
  'C',
  'kg', 'g',
  'sr', 'rad', 'deg',
  'percent',
]

let formulaUnits: Map<string, UnitInfo> | undefined

/** The formula unit constants, name → SI factor and dimension. */
export function formulaUnitTable(): ReadonlyMap<string, UnitInfo> {
  if (formulaUnits) return formulaUnits
  const table = new Map<string, UnitInfo>()
  for (const name of FORMULA_UNIT_NAMES) {
    const r = parseUnit(name)
    if (!r.ok) throw new Error(`unit table: ${r.error}`)
    table.set(name, { factor: r.factor, dim: r.dim })
  }
  formulaUnits = table
  return table
}

/** Display units the editor suggests, grouped by what they measure. */
export const SUGGESTED_DISPLAY_UNITS: readonly string[] = [
  'nm', 'um', 'mm', 'cm', 'm', 'eV', 'meV', 'J', '1/cm', 'cm^-1', '1/um', '1/m', 'K', '%', 's', 'ps', 'fs', 'Hz', 'THz',
  'W', 'mW', 'W/m^2', 'mW/cm^2', 'W/m^2/nm', 'A', 'mA', 'mA/cm^2', 'A/m^2', 'V', 'eV/cm^2', 'eV/K', 'cm^2', 'um^2',
  '1/(m^2*s*nm)', 'sr',
]
