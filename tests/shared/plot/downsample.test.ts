import { describe, it, expect } from 'vitest'
import { downsample, downsampleColumns } from '../../../shared/plot/downsample'

describe('downsample', () => {
  it('downsample returns a short series unchanged', () => {
    expect(downsample([1, 2, 3], [4, 5, 6], 100)).toEqual({ x: [1, 2, 3], y: [4, 5, 6] })
  })
  it('downsample keeps a one-point spike and the end points of a long series', () => {
    const n = 50_000
    const x = Array.from({ length: n }, (_, i) => i)
    const y = x.map(() => 0)
    y[31_337] = 42
    y[20_000] = -7
    const d = downsample(x, y, 1000)
    expect(d.x.length).toBeLessThanOrEqual(1000)
    expect(d.x[0]).toBe(0)
    expect(d.x[d.x.length - 1]).toBe(n - 1)
    expect(Math.max(...d.y)).toBe(42)
    expect(Math.min(...d.y)).toBe(-7)
    expect(d.x).toContain(31_337)
    for (let i = 1; i < d.x.length; i++) expect(d.x[i]).toBeGreaterThan(d.x[i - 1])
  })
  it('downsample keeps a gap (NaN) inside a bucket', () => {
    const x = Array.from({ length: 10_000 }, (_, i) => i)
    const y = x.map((i) => (i === 5000 ? NaN : 1))
    expect(downsample(x, y, 400).y.some(Number.isNaN)).toBe(true)
  })
})

describe('downsampleColumns', () => {
  it('downsampleColumns averages neighbouring columns to at most maxColumns', () => {
    const x = [0, 1, 2, 3, 4, 5]
    const z = [[1, 3, 5, 7, 9, 11], [0, 0, NaN, 2, 4, 4]]
    expect(downsampleColumns(x, z, 3)).toEqual({ x: [0.5, 2.5, 4.5], z: [[2, 6, 10], [0, 2, 4]] })
    expect(downsampleColumns(x, z, 10).z).toEqual(z)
  })
})
