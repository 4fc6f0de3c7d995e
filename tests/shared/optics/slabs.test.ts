import { describe, expect, it } from 'vitest'
import {
  absorbedFraction, absorptanceLambertian, absorptanceSlab, absorptionDepth, alphaFromAbsorbance,
  alphaFromTransmittance, reflectance, reflectanceSlab, thicknessFor, transmittanceSlab,
} from '../../../shared/optics/slabs'
import { arr, el, expectRel } from './close'

const ROUNDING = 1e-12

describe('reflectance(n, k, n0?)', () => {
  it('reflectance(1.5, 0) is 0.04, the textbook glass surface ((n − 1)/(n + 1))², exact', () => {
    expect(reflectance(1.5, 0)).toBe(0.04)
  })
  it('reflectance with an ambient index uses ((n − n0)² + k²)/((n + n0)² + k²) (Born & Wolf ch. 14)', () => {
    expectRel(reflectance(1.5, 0, 1.33), (0.17 * 0.17) / (2.83 * 2.83), ROUNDING)
    expectRel(reflectance(0.2, 3.5), (0.64 + 12.25) / (1.44 + 12.25), ROUNDING) // a metal-like index
    expect(reflectance(1.33, 0, 1.33)).toBe(0) // index matched
  })
  it('reflectance of silicon at 600 nm is about 35 % from Green 2008 n = 3.940, k = 0.019934', () => {
    // n, k: M. A. Green, Sol. Energy Mater. Sol. Cells 92, 1305 (2008), Table 1, as transcribed in the
    // refractiveindex.info database (main/Si/Green-2008). "About 35 % at 600 nm" for bare Si: common practice.
    const R = reflectance(3.94, 0.019934) as number
    expectRel(R, (2.94 ** 2 + 0.019934 ** 2) / (4.94 ** 2 + 0.019934 ** 2), ROUNDING)
    expect(R).toBeGreaterThan(0.34)
    expect(R).toBeLessThan(0.36)
  })
  it('reflectance refuses a non-positive ambient index', () => {
    expect(() => reflectance(1.5, 0, 0)).toThrow(/reflectance: the ambient index/)
  })
})

describe('single-pass Beer–Lambert', () => {
  it('absorbedFraction(α, 1/α) is 1 − 1/e and absorbedFraction(α, 0) is 0', () => {
    expectRel(absorbedFraction(1e6, 1e-6), 1 - Math.exp(-1), ROUNDING)
    expect(absorbedFraction(1e6, 0)).toBe(0)
  })
  it('absorbedFraction keeps its digits for weak absorption (→ αd)', () => {
    expectRel(absorbedFraction(1, 1e-9), 1e-9, 1e-9)
  })
  it('absorbedFraction over an array of α equals the scalar values (exact)', () => {
    const a = arr(0, 1e4, 1e6, 1e8)
    const out = absorbedFraction(a, 2e-6)
    for (let i = 0; i < a.length; i++) expect(el(out, i)).toBe(absorbedFraction(a[i], 2e-6))
  })
  it('absorbedFraction refuses a negative thickness', () => {
    expect(() => absorbedFraction(1e6, -1e-9)).toThrow(/absorbed_fraction: the thickness d/)
  })
  it('absorptionDepth(1e6 1/m) is 1 µm', () => {
    expect(absorptionDepth(1e6)).toBe(1e-6)
    expect(el(absorptionDepth(arr(1e6, 0)), 1)).toBe(Infinity)
  })
  it('thicknessFor inverts absorbedFraction (round trip) and gives ln 10/α for 90 %', () => {
    expectRel(thicknessFor(1e6, 0.9), Math.LN10 * 1e-6, ROUNDING)
    for (const f of [1e-6, 0.3, 0.99]) expectRel(absorbedFraction(1e6, thicknessFor(1e6, f)), f, 1e-12)
    expect(thicknessFor(1e6, 1)).toBe(Infinity)
    expect(() => thicknessFor(1e6, 1.2)).toThrow(/thickness_for: the fraction/)
  })
})

describe('incoherent slab with multiple reflections', () => {
  it('transmittanceSlab, reflectanceSlab and absorptanceSlab add up to 1 (energy balance)', () => {
    for (const ad of [0, 1e-6, 0.1, 1, 5, 40]) {
      for (const R of [0, 0.04, 0.3, 0.9]) {
        const T = transmittanceSlab(ad / 1e-5, 1e-5, R) as number
        const Rs = reflectanceSlab(ad / 1e-5, 1e-5, R) as number
        const A = absorptanceSlab(ad / 1e-5, 1e-5, R) as number
        expect(Math.abs(T + Rs + A - 1)).toBeLessThan(1e-14)
      }
    }
  })
  it('absorptanceSlab keeps its digits for a face reflectance near 1 and weak absorption', () => {
    // (1 − R)(1 − e^(−αd))/(1 − R·e^(−αd)) evaluated with 50-digit decimals (closed form, Python decimal), quoted to
    // 20 digits as computed (a double keeps about 17)
    /* eslint-disable no-loss-of-precision */
    expect(Math.abs((absorptanceSlab(1e3, 1e-6, 0.999) as number) / 5.0012501041406176216e-4 - 1)).toBeLessThan(1e-14)
    expect(Math.abs((absorptanceSlab(1, 1e-9, 0.9999) as number) / 9.9999000059998900033e-10 - 1)).toBeLessThan(1e-14)
    const arrayForm = absorptanceSlab(Float64Array.of(1, 1e3), 1e-9, 0.9999) as Float64Array
    expect(Math.abs(arrayForm[0] / 9.9999000059998900033e-10 - 1)).toBeLessThan(1e-14)
    /* eslint-enable no-loss-of-precision */
  })

  it('a transparent slab transmits (1 − R)/(1 + R) and reflects 2R/(1 + R) (the geometric series summed)', () => {
    expectRel(transmittanceSlab(0, 1e-3, 0.3), 0.7 / 1.3, ROUNDING)
    expectRel(reflectanceSlab(0, 1e-3, 0.3), 0.6 / 1.3, ROUNDING)
    expect(absorptanceSlab(0, 1e-3, 0.3)).toBe(0)
  })
  it('an opaque slab reflects R and absorbs 1 − R', () => {
    expect(transmittanceSlab(1e9, 1e-3, 0.3)).toBe(0)
    expect(reflectanceSlab(1e9, 1e-3, 0.3)).toBe(0.3)
    expectRel(absorptanceSlab(1e9, 1e-3, 0.3), 0.7, ROUNDING)
  })
  it('with R = 0 the slab is Beer–Lambert: T = e^(−αd), A = 1 − e^(−αd)', () => {
    expectRel(transmittanceSlab(1e5, 1e-5, 0), Math.exp(-1), ROUNDING)
    expectRel(absorptanceSlab(1e5, 1e-5, 0), 1 - Math.exp(-1), ROUNDING)
  })
  it('the slab functions broadcast every argument the same way as their scalar forms (exact)', () => {
    const a = arr(0, 1e3, 1e5, 1e7)
    const R = arr(0.1, 0.2, 0.3, 0.4)
    const d = arr(1e-6, 2e-6, 3e-6, 4e-6)
    for (const f of [transmittanceSlab, reflectanceSlab, absorptanceSlab]) {
      const byAlpha = f(a, 1e-5, 0.3)
      const byAll = f(a, d, R)
      const byR = f(a, 1e-5, R)
      for (let i = 0; i < a.length; i++) {
        expect(el(byAlpha, i)).toBe(f(a[i], 1e-5, 0.3))
        expect(el(byAll, i)).toBe(f(a[i], d[i], R[i]))
        expect(el(byR, i)).toBe(f(a[i], 1e-5, R[i]))
      }
    }
  })
  it('the slab functions refuse R outside 0–1 and a negative thickness, naming the function', () => {
    expect(() => transmittanceSlab(1e5, 1e-5, 1.2)).toThrow(/transmittance_slab: the face reflectance R must be between 0 and 1/)
    expect(() => absorptanceSlab(arr(1e5, 1e5), 1e-5, arr(0.3, -0.1))).toThrow(/absorptance_slab: the face reflectance/)
    expect(() => reflectanceSlab(1e5, -1, 0.3)).toThrow(/reflectance_slab: the thickness d/)
  })
  it('alphaFromTransmittance inverts transmittanceSlab exactly (round trip over 12 orders of αd)', () => {
    for (const alpha of [1, 1e2, 1e4, 1e5, 1e6, 3e6]) {
      for (const R of [0, 0.04, 0.3, 0.6]) {
        const T = transmittanceSlab(alpha, 1e-5, R)
        expectRel(alphaFromTransmittance(T, R, 1e-5), alpha, alpha * 1e-5 < 1e-3 ? 1e-6 : 1e-11)
      }
    }
  })
  it('alphaFromTransmittance of an array of T matches its scalars, gives Infinity at T = 0 and a negative α above the lossless limit', () => {
    const T = arr(0.5, 0.1)
    const out = alphaFromTransmittance(T, 0.3, 1e-5)
    expect(el(out, 1)).toBe(alphaFromTransmittance(0.1, 0.3, 1e-5))
    expect(alphaFromTransmittance(0, 0.3, 1e-5)).toBe(Infinity)
    expect(alphaFromTransmittance(0.7 / 1.3 + 0.01, 0.3, 1e-5)).toBeLessThan(0)
    expect(() => alphaFromTransmittance(0.5, 1, 1e-5)).toThrow(/alpha_from_transmittance: the face reflectance R/)
    expect(() => alphaFromTransmittance(0.5, 0.3, 0)).toThrow(/thickness d must be positive/)
  })
  it('alphaFromAbsorbance(A10, d) = A10·ln 10/d (decadic Beer–Lambert, IUPAC)', () => {
    expectRel(alphaFromAbsorbance(1, 1e-6), Math.LN10 * 1e6, ROUNDING)
    // its transmittance is 10^−A10
    expectRel(Math.exp(-(alphaFromAbsorbance(2, 1e-6) as number) * 1e-6), 0.01, 1e-12)
  })
})

describe('absorptanceLambertian(α, d, n)', () => {
  it('absorptanceLambertian tends to 4n²·αd for weak absorption (Yablonovitch, J. Opt. Soc. Am. 72, 899 (1982))', () => {
    for (const n of [1.5, 2.5, 3.5]) {
      const ad = 1e-9
      expectRel((absorptanceLambertian(ad / 1e-6, 1e-6, n) as number) / ad, 4 * n * n, 1e-6)
    }
  })
  it('absorptanceLambertian tends to 1 for strong absorption and is 0 without absorption', () => {
    expectRel(absorptanceLambertian(1e8, 1e-5, 3.5), 1, ROUNDING)
    expect(absorptanceLambertian(0, 1e-5, 3.5)).toBe(0)
  })
  it('absorptanceLambertian with n = 1 is the double pass along 4d: 1 − e^(−4αd), exact', () => {
    expect(absorptanceLambertian(1e5, 1e-6, 1)).toBe(-Math.expm1(-4 * 1e5 * 1e-6))
  })
  it('absorptanceLambertian matches its closed form (1 − e^(−4αd))/(1 − (1 − 1/n²)e^(−4αd))', () => {
    const x = Math.exp(-4 * 1e4 * 2e-6)
    expectRel(absorptanceLambertian(1e4, 2e-6, 3.5), (1 - x) / (1 - (1 - 1 / 12.25) * x), 1e-13)
  })
  it('absorptanceLambertian exceeds the single pass and the double pass at every αd', () => {
    for (const ad of [1e-4, 1e-2, 0.3, 2]) {
      const A = absorptanceLambertian(ad / 1e-6, 1e-6, 3.5) as number
      expect(A).toBeGreaterThan(-Math.expm1(-2 * ad))
    }
  })
  it('absorptanceLambertian refuses an index below 1', () => {
    expect(() => absorptanceLambertian(1e4, 1e-6, 0.5)).toThrow(/absorptance_lambertian: the refractive index n must be at least 1/)
  })
})

describe('worked examples of the doc comments (slabs)', () => {
  it('each example reproduces its printed output', () => {
    expectRel(reflectance(3.939, 0.0198), 0.354106, 1e-5)
    expectRel(absorbedFraction(1e6, 1e-6), 0.63212056, 1e-8)
    expectRel(thicknessFor(1e6, 0.9), 2.3025851e-6, 1e-7)
    expectRel(transmittanceSlab(1e5, 1e-5, 0.3), 0.182484, 1e-5)
    expectRel(reflectanceSlab(0, 1e-3, 0.3), 0.46153846, 1e-8)
    expectRel(absorptanceSlab(1e5, 1e-5, 0.3), 0.497377, 1e-5)
    expectRel(alphaFromTransmittance(0.18248361, 0.3, 1e-5), 1e5, 1e-6)
    expectRel(alphaFromAbsorbance(1, 1e-6), 2.3025851e6, 1e-7)
    expectRel(absorptanceLambertian(1e2, 1e-6, 3.5), 4.87708e-3, 1e-5)
  })
})
