/**
 * How a built-in function is described to the engine: name, group, signature, one-line doc, arity, implementation,
 * and how dimensions flow through it. Dimension rules are declarative: each argument expects a fixed dimension,
 * any dimension, or a type variable (`'x'`, `'y'`) that must agree between the arguments sharing it; the result is a
 * fixed dimension, a type variable's dimension, or computed from the argument dimensions.
 */
import type { Num } from '../../optics/num'
import { dimPhrase, energyAndLength } from '../describe'
import { dimEquals, dimName, type Dim } from '../dimensions'

export type ArgDim = Dim | 'any' | 'x' | 'y'
export type ResultDim = Dim | 'x' | 'y' | ((args: readonly (Dim | null)[]) => Dim | null)

export interface Builtin {
  name: string
  group: string
  /** `alpha_edge(E, Eg, B, r, Eu)` */
  signature: string
  /** One line: what it gives, with units. */
  doc: string
  params: readonly string[]
  minArgs: number
  maxArgs: number
  args: readonly ArgDim[]
  /** Dimension rule for arguments past `args` (variadic functions). */
  rest?: ArgDim
  result: ResultDim
  impl: (args: Num[], maxElements: number) => Num
}

export interface DimOutcome {
  dim: Dim | null
  warnings: string[]
}

/** Checks argument dimensions against a function's declaration and gives the result's dimension. */
export function flowDims(fn: Builtin, argDims: readonly (Dim | null)[]): DimOutcome {
  const warnings: string[] = []
  const vars: Record<'x' | 'y', { dim: Dim; param: string } | undefined> = { x: undefined, y: undefined }
  argDims.forEach((d, i) => {
    const want = i < fn.args.length ? fn.args[i] : fn.rest ?? 'any'
    const param = fn.params[Math.min(i, fn.params.length - 1)] ?? `argument ${i + 1}`
    if (d === null || want === 'any') return
    if (want === 'x' || want === 'y') {
      const bound = vars[want]
      if (!bound) vars[want] = { dim: d, param }
      else if (!dimEquals(bound.dim, d))
        warnings.push(`${fn.name}: ${param} is ${dimPhrase(d)} but ${bound.param} is ${dimPhrase(bound.dim)}; give both the same dimension`)
      return
    }
    if (!dimEquals(want, d)) warnings.push(`${fn.name}: ${param} should be ${dimPhrase(want)}, not ${dimPhrase(d)}${convertHint(want, d)}`)
  })
  const r = fn.result
  let dim: Dim | null
  if (r === 'x' || r === 'y') dim = vars[r]?.dim ?? null
  else if (typeof r === 'function') dim = r(argDims)
  else dim = r
  return { dim, warnings }
}

/** For an energy given where a wavelength belongs, or the reverse: the library function that converts. */
function convertHint(want: Dim, got: Dim): string {
  if (!energyAndLength(want, got)) return ''
  return dimName(want) === 'length'
    ? '; photon_wavelength(E) gives the wavelength of a photon energy'
    : '; photon_energy(lambda) gives the photon energy of a wavelength'
}

/** Positional arity message, or null when the count fits. */
export function arityProblem(fn: Builtin, n: number): string | null {
  if (n >= fn.minArgs && n <= fn.maxArgs) return null
  const want =
    fn.minArgs === fn.maxArgs ? `${fn.minArgs}` : fn.maxArgs === Infinity ? `at least ${fn.minArgs}` : `${fn.minArgs} to ${fn.maxArgs}`
  return `${fn.signature} takes ${want} argument${want === '1' ? '' : 's'}, not ${n}`
}
