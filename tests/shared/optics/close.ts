import { expect } from 'vitest'
import type { Num } from '../../../shared/optics/num'

/** Electronvolt in joules (exact, 2019 SI). */
export const eV = 1.602176634e-19

/** |actual − expected| ≤ tol·|expected| (tol is named at the call site). */
export function expectRel(actual: Num | undefined, expected: number, tol: number): void {
  expect(typeof actual).toBe('number')
  const a = actual as number
  const scale = Math.abs(expected)
  if (!(Math.abs(a - expected) <= tol * scale)) {
    throw new Error(`expected ${a} to be within a relative ${tol} of ${expected} (off by ${Math.abs(a - expected) / scale})`)
  }
}

/** Element i of a Num result, checking it is an array. */
export function el(x: Num, i: number): number {
  if (typeof x === 'number') throw new Error('expected an array result')
  return x[i]
}

export const arr = (...xs: number[]): Float64Array => Float64Array.from(xs)
