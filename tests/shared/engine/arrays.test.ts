import { describe, expect, it } from 'vitest'
import * as A from '../../../shared/engine/functions/arrays'
import { arr, formula, num } from './helpers'

const f64 = (xs: number[]): Float64Array => Float64Array.from(xs)

describe('grids', () => {
  it('grid(1, 2, 5) gives [1, 1.25, 1.5, 1.75, 2] with both ends exact', () => {
    expect(arr('grid(1, 2, 5)')).toEqual([1, 1.25, 1.5, 1.75, 2])
    expect(arr('grid(1.2*eV, 2.4*eV, 601)', 'eV').at(-1)).toBe(2.4)
  })

  it('grid keeps the dimension of its ends and warns when they differ', () => {
    expect(formula('grid(1*nm, 2*nm, 3)').dimension).toBe('length')
    expect(formula('grid(1*eV, 2*nm, 3)').warnings?.[0]).toBe('grid: to is a length (nm) but from is an energy (eV); give both the same dimension')
  })

  it('grid refuses fewer than 2 points and fractional counts', () => {
    expect(formula('grid(0, 1, 1)').error).toBe('grid: n must be at least 2')
    expect(formula('grid(0, 1, 2.5)').error).toBe('grid: n must be a whole number, not 2.5')
    expect(formula('grid(0, 1, [2, 3])').error).toBe('grid: n must be a single number')
  })

  it('loggrid(1, 1000, 4) gives [1, 10, 100, 1000] (equal ratios)', () => {
    const g = arr('loggrid(1, 1000, 4)')
    expect(g[0]).toBe(1)
    expect(g[3]).toBe(1000)
    expect(g[1]).toBe(10)
    expect(g[2]).toBe(100)
  })

  it('loggrid lands on whole decades exactly in a display unit, decreasing or negative too', () => {
    expect(arr('loggrid(1*nm, 1000*nm, 4)', 'nm')).toEqual([1, 10, 100, 1000])
    expect(arr('loggrid(1000, 1, 4)')).toEqual([1000, 100, 10, 1])
    expect(arr('loggrid(-1, -1000, 4)')).toEqual([-1, -10, -100, -1000])
    const g = arr('loggrid(1, 2, 5)')
    for (let i = 1; i < 5; i++) expect(g[i] / g[i - 1]).toBeCloseTo(2 ** 0.25, 14)
  })

  it('loggrid refuses ends of opposite sign or zero', () => {
    expect(formula('loggrid(-1, 10, 5)').error).toMatch(/same sign/)
    expect(formula('loggrid(0, 10, 5)').error).toMatch(/non-zero/)
  })
})

describe('reductions and selection', () => {
  it('len, sum, mean, min, max, first, last of [3, 1, 2]', () => {
    expect(num('len([3, 1, 2])')).toBe(3)
    expect(num('len(7)')).toBe(1)
    expect(num('sum([3, 1, 2])')).toBe(6)
    expect(num('mean([3, 1, 2])')).toBe(2)
    expect(num('min([3, 1, 2])')).toBe(1)
    expect(num('max([3, 1, 2])')).toBe(3)
    expect(num('first([3, 1, 2])')).toBe(3)
    expect(num('last([3, 1, 2])')).toBe(2)
  })

  it('min and max of several arguments are element-wise and broadcast', () => {
    expect(arr('max([1, 5, 3], 2)')).toEqual([2, 5, 3])
    expect(arr('min([1, 5, 3], [0, 9, 3])')).toEqual([0, 5, 3])
  })

  it('min and max of one array skip NaN; sum and mean propagate it', () => {
    expect(A.min([f64([NaN, 2, 1])])).toBe(1)
    expect(A.max([f64([NaN, 2, 1])])).toBe(2)
    expect(A.sum(f64([NaN, 2]))).toBeNaN()
    expect(A.mean(f64([1, NaN]))).toBeNaN()
  })

  it('sum of lengths keeps the length dimension', () => {
    expect(formula('sum([1, 2]*nm)', 'nm').value).toBe(3)
  })

  it('at counts from 0, negative from the end, and takes arrays of indices', () => {
    expect(num('at([4, 5, 6], 1)')).toBe(5)
    expect(num('at([4, 5, 6], -1)')).toBe(6)
    expect(arr('at([4, 5, 6], [2, 0])')).toEqual([6, 4])
    expect(formula('at([4, 5, 6], 3)').error).toBe('at: index 3 is outside 0…2 (the array has 3 elements; -1 is the last)')
    expect(formula('at([4, 5, 6], 0.5)').error).toBe('at: the index must be a whole number, not 0.5')
  })

  it('where(cond, a, b) chooses element-wise and warns when a and b differ in dimension', () => {
    expect(arr('where([1, 0, 1], 5, [7, 8, 9])')).toEqual([5, 8, 5])
    expect(formula('where([1, 0], 1*eV, 1*nm)').warnings?.[0]).toBe('where: b is a length (nm) but a is an energy (eV); give both the same dimension')
  })

  it('clip(x, lo, hi) limits to the range', () => {
    expect(arr('clip([-1, 0.5, 3], 0, 1)')).toEqual([0, 0.5, 1])
  })
})

describe('interpolation, integrals, slopes, crossings', () => {
  it('interpolate is linear between samples, works on decreasing x and is NaN at the points of an array outside the data', () => {
    expect(num('interpolate(1.5, [1, 2], [10, 20])')).toBe(15)
    expect(arr('interpolate([1.5, 2.5, 0], [3, 2, 1], [30, 20, 10])')).toEqual([15, 25, NaN])
    expect(formula('interpolate(1, [1, 3, 2], [1, 2, 3])').error).toMatch(/strictly increasing/)
  })

  it('interpolate gives the unit of y and wants xq and x alike', () => {
    const r = formula('interpolate(1.5*eV, [1, 2]*eV, [10, 20]/cm)', '1/cm')
    expect(r.value).toBeCloseTo(15, 10)
    expect(r.dimension).toBe('1/length')
    expect(formula('interpolate(1*nm, [0, 1e10]*eV, [10, 20])').warnings?.[0]).toBe('interpolate: x is an energy (eV) but xq is a length (nm); give both the same dimension')
  })

  // trapezoid rule is exact for linear integrands
  it('integrate(y, x) is the trapezoid rule: exact for a straight line', () => {
    expect(num('integrate([0, 1, 2], [0, 1, 2])')).toBe(2)
    expect(num('integrate(grid(0, 1, 11)*3 + 1, grid(0, 1, 11))')).toBeCloseTo(2.5, 14)
  })

  // ∫₀^π sin x dx = 2; the composite trapezoid error is −(b − a)h²/12·f'' ≈ 2·(π/1000)²·π/12·… < 2e-6
  it('integrate(sin(x), x) over 0…π with 1001 points is 2 within 2e-6', () => {
    expect(Math.abs(num('integrate(sin(grid(0, pi, 1001)), grid(0, pi, 1001))') - 2)).toBeLessThan(2e-6)
  })

  it('integrate multiplies the dimensions: W/m^2/nm over nm gives W/m^2', () => {
    const r = formula('integrate([1, 1]*W/m^2/nm, [500, 600]*nm)', 'W/m^2')
    expect(r.dimension).toBe('irradiance')
    expect(r.value).toBeCloseTo(100, 9)
  })

  it('cumulative(y, x) runs from 0 to the full integral', () => {
    expect(arr('cumulative([1, 1, 1], [0, 1, 3])')).toEqual([0, 1, 3])
  })

  it('slope(y, x) is exact for a quadratic inside and one-sided at the ends', () => {
    expect(arr('slope([0, 1, 4, 9], [0, 1, 2, 3])')).toEqual([1, 2, 4, 5])
    // uneven spacing: y = x², x = [0, 1, 3, 4] → dy/dx = 2x inside (three-point stencil, Fornberg 1988)
    const s = A.slope(f64([0, 1, 9, 16]), f64([0, 1, 3, 4]))
    expect(s[1]).toBeCloseTo(2, 12)
    expect(s[2]).toBeCloseTo(6, 12)
  })

  it('slope divides the dimensions: a length over a time is a velocity', () => {
    const r = formula('slope([1, 2, 4]*nm, [1, 2, 3]*s)', 'nm/s')
    expect(r.dimension).toBe('velocity')
    expect(r.value).toEqual([1, 1.5, 2])
  })

  it('crossing(x, y, level) finds the first crossing by linear interpolation, NaN when there is none', () => {
    expect(num('crossing([0, 1, 2], [0, 10, 20], 15)')).toBe(1.5)
    expect(num('crossing([0, 1, 2, 3], [0, 10, 0, 10], 5)')).toBe(0.5)
    expect(num('crossing([0, 1, 2], [20, 10, 0], 10)')).toBe(1)
    expect(Number.isNaN(A.crossing(f64([0, 1]), f64([0, 1]), 5))).toBe(true)
  })
})
