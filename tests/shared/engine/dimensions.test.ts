import { describe, expect, it } from 'vitest'
import {
  DIMENSIONLESS, ENERGY, LENGTH, TIME, dimDiv, dimEquals, dimMul, dimName, dimPow, dimSymbols,
} from '../../../shared/engine/dimensions'

describe('dimensions', () => {
  it('dimName gives the plain names used in results and warnings', () => {
    expect(dimName(ENERGY)).toBe('energy')
    expect(dimName(dimDiv(DIMENSIONLESS, LENGTH))).toBe('1/length')
    expect(dimName(dimMul(LENGTH, LENGTH))).toBe('area')
    expect(dimName(dimDiv(LENGTH, TIME))).toBe('velocity')
    expect(dimName(DIMENSIONLESS)).toBe('dimensionless')
  })

  it('dimName falls back to SI base units for dimensions without a name', () => {
    const odd = dimMul(ENERGY, TIME)
    expect(dimName(dimMul(odd, TIME))).toBe('m^2·kg')
    expect(dimSymbols(dimPow(LENGTH, 3))).toBe('m^3')
  })

  it('dimPow keeps half powers exact: the square root of an area is a length', () => {
    expect(dimEquals(dimPow(dimMul(LENGTH, LENGTH), 0.5), LENGTH)).toBe(true)
    expect(dimEquals(dimPow(dimPow(LENGTH, 1 / 3), 3), LENGTH)).toBe(true)
  })
})
