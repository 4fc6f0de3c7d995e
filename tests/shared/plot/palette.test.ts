import { describe, it, expect } from 'vitest'
import { RAMP, TRACE_COLORS, rampColor, rampColors, traceColor } from '../../../shared/plot/palette'
import { formatNumber, formatWithError } from '../../../shared/plot/format'

describe('traceColor', () => {
  it('traceColor(i) runs through our own sequence and repeats', () => {
    expect(traceColor(0)).toBe('#23406e')
    expect(traceColor(TRACE_COLORS.length)).toBe(traceColor(0))
    expect(new Set(TRACE_COLORS).size).toBe(TRACE_COLORS.length)
  })
})

describe('rampColor', () => {
  it('rampColor(t) hits the stops and interpolates between them', () => {
    expect(rampColor(0)).toBe(RAMP[0][1])
    expect(rampColor(1)).toBe(RAMP[RAMP.length - 1][1])
    expect(rampColor(-3)).toBe(RAMP[0][1])
    // halfway between #1c2d55 and #2e6f8e
    expect(rampColor(0.15)).toBe('#254e72')
    expect(rampColors(3)).toEqual([rampColor(0), rampColor(0.5), rampColor(1)])
    expect(rampColors(0)).toEqual([])
  })
})

describe('formatNumber', () => {
  it('formatNumber keeps four significant figures and switches to exponents for extremes', () => {
    expect(formatNumber(837.7311)).toBe('837.7')
    expect(formatNumber(1.5)).toBe('1.5')
    expect(formatNumber(0.000012)).toBe('1.2e-5')
    expect(formatNumber(250000)).toBe('2.5e5')
    expect(formatNumber(0)).toBe('0')
    expect(formatNumber(10000)).toBe('10000')
    expect(formatNumber(12345.6)).toBe('12346')
  })
  it('formatWithError rounds to two significant figures of the error', () => {
    expect(formatWithError(1.48137, 0.00213)).toBe('1.4814 ± 0.0021')
    expect(formatWithError(22.13, 0.4)).toBe('22.13 ± 0.40')
    expect(formatWithError(1.5, undefined)).toBe('1.5')
  })
})
