import { describe, it, expect } from 'vitest'
import { VISIBLE_NM, cieXyz, srgbEncode, visibleBand, wavelengthToRgb } from '../../../shared/plot/visible'
import { HC_EV_NM } from '../../../shared/plot/units'

describe('cieXyz', () => {
  // CIE 1931 2° standard observer, CIE 15:2004 tables (values from memory): the fit of Wyman, Sloan & Shirley
  // (JCGT 2(2), 2013) is stated to be close to the table; an absolute tolerance of 0.05 is used here.
  const table: [number, number, number, number][] = [
    [450, 0.3362, 0.038, 1.7721],
    [500, 0.0049, 0.323, 0.272],
    [555, 0.5121, 1.0, 0.0057],
    [600, 1.0622, 0.631, 0.0008],
    [650, 0.2835, 0.107, 0.0],
  ]
  for (const [l, x, y, z] of table)
    it(`cieXyz(${l}) follows the CIE 1931 table within 0.05`, () => {
      const [fx, fy, fz] = cieXyz(l)
      expect(Math.abs(fx - x)).toBeLessThan(0.05)
      expect(Math.abs(fy - y)).toBeLessThan(0.05)
      expect(Math.abs(fz - z)).toBeLessThan(0.05)
    })
})

describe('srgbEncode', () => {
  it('srgbEncode follows IEC 61966-2-1: linear below 0.0031308, 1 at 1', () => {
    expect(srgbEncode(0.002)).toBeCloseTo(0.02584, 10)
    expect(srgbEncode(1)).toBeCloseTo(1, 12)
    expect(srgbEncode(0)).toBe(0)
    expect(srgbEncode(2)).toBeCloseTo(1, 12)
  })
})

describe('wavelengthToRgb', () => {
  it('wavelengthToRgb(450) is blue: blue highest, green off', () => {
    const [r, g, b] = wavelengthToRgb(450)
    expect(b).toBe(255)
    expect(r).toBeLessThan(b / 2)
    expect(g).toBeLessThan(30)
  })
  it('wavelengthToRgb(530) is green', () => {
    const [r, g, b] = wavelengthToRgb(530)
    expect(g).toBe(255)
    expect(r).toBeLessThan(80)
    expect(b).toBeLessThan(80)
  })
  it('wavelengthToRgb(580) is yellow-orange: red and green strong, no blue', () => {
    const [r, g, b] = wavelengthToRgb(580)
    expect(r).toBe(255)
    expect(g).toBeGreaterThan(140)
    expect(b).toBe(0)
  })
  it('wavelengthToRgb(650) is red', () => {
    expect(wavelengthToRgb(650)).toEqual([255, 0, 0])
  })
  it('wavelengthToRgb fades toward both ends of the band and is black outside it', () => {
    const sum = (c: number[]) => c[0] + c[1] + c[2]
    expect(sum(wavelengthToRgb(380))).toBeLessThan(sum(wavelengthToRgb(450)))
    expect(sum(wavelengthToRgb(750))).toBeLessThan(sum(wavelengthToRgb(650)))
    expect(wavelengthToRgb(379)).toEqual([0, 0, 0])
    expect(wavelengthToRgb(800)).toEqual([0, 0, 0])
    expect(wavelengthToRgb(NaN)).toEqual([0, 0, 0])
  })
})

describe('visibleBand', () => {
  it('visibleBand("nm") covers 380–750 nm in 5 nm segments', () => {
    const band = visibleBand('nm')!
    expect(band).toHaveLength(74)
    expect(band[0].from).toBe(380)
    expect(band[band.length - 1].to).toBe(750)
    expect(band[0].color).toMatch(/^rgb\(\d+, \d+, \d+\)$/)
  })
  it('visibleBand("eV") spans hc/750 nm to hc/380 nm with from < to in every segment', () => {
    const band = visibleBand('eV')!
    const lo = Math.min(...band.map((s) => s.from))
    const hi = Math.max(...band.map((s) => s.to))
    expect(lo).toBeCloseTo(HC_EV_NM / VISIBLE_NM[1], 10)
    expect(hi).toBeCloseTo(HC_EV_NM / VISIBLE_NM[0], 10)
    expect(hi).toBeCloseTo(3.2627, 3)
    for (const s of band) expect(s.from).toBeLessThan(s.to)
  })
  it('visibleBand("um") and visibleBand("1/cm") convert the limits', () => {
    expect(visibleBand('um')![0].from).toBeCloseTo(0.38, 12)
    const wn = visibleBand('1/cm')!
    expect(Math.max(...wn.map((s) => s.to))).toBeCloseTo(1e7 / 380, 6)
  })
  it('visibleBand is null on a non-spectral axis', () => {
    expect(visibleBand('%')).toBeNull()
    expect(visibleBand(undefined)).toBeNull()
  })
})
