import { describe, expect, it } from 'vitest'
import { stackResponse } from '../../../shared/optics/stack'
import { tmm } from '../../../shared/optics/tmm'
import { filmReflectance, filmTransmittance } from '../../../shared/optics/films'
import { absorptanceSlab, reflectanceSlab, transmittanceSlab } from '../../../shared/optics/slabs'

const deg = Math.PI / 180
const grid = (from: number, to: number, n: number): Float64Array => Float64Array.from({ length: n }, (_, i) => from + ((to - from) * i) / (n - 1))
const lam = grid(350e-9, 1100e-9, 76)

function maxRelDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let worst = 0
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.max(Math.abs(b[i]), 1e-300))
  return worst
}

/** Fresnel power reflectances of one interface (E. Hecht, Optics, 4th ed. (2002), §4.6.2, r⊥ and r∥). */
function fresnel(n0: number, n1: number, theta: number): { Rs: number; Rp: number } {
  const ci = Math.cos(theta)
  const ct = Math.sqrt(1 - ((n0 / n1) * Math.sin(theta)) ** 2)
  const rs = (n0 * ci - n1 * ct) / (n0 * ci + n1 * ct)
  const rp = (n1 * ci - n0 * ct) / (n1 * ci + n0 * ct)
  return { Rs: rs * rs, Rp: rp * rp }
}

/**
 * Airy sum of a transparent film at oblique incidence (Born & Wolf, Principles of Optics, 7th ed., §7.6.1): an
 * independent check of the tilted admittances, r = (r01 + r12·e^(2iβ))/(1 + r01·r12·e^(2iβ)), β = 2π·n1·d·cos θ1/λ.
 */
function airyOblique(lambda: number, n0: number, n1: number, d: number, n2: number, theta: number, p: boolean): number {
  const s0 = n0 * Math.sin(theta)
  const c0 = Math.cos(theta)
  const c1 = Math.sqrt(1 - (s0 / n1) ** 2)
  const c2 = Math.sqrt(1 - (s0 / n2) ** 2)
  const r = (na: number, ca: number, nb: number, cb: number): number => (p ? (nb * ca - na * cb) / (nb * ca + na * cb) : (na * ca - nb * cb) / (na * ca + nb * cb))
  const r01 = r(n0, c0, n1, c1)
  const r12 = r(n1, c1, n2, c2)
  const b2 = (4 * Math.PI * n1 * d * c1) / lambda
  const numRe = r01 + r12 * Math.cos(b2)
  const numIm = r12 * Math.sin(b2)
  const denRe = 1 + r01 * r12 * Math.cos(b2)
  const denIm = r01 * r12 * Math.sin(b2)
  return (numRe * numRe + numIm * numIm) / (denRe * denRe + denIm * denIm)
}

describe('stackResponse (multilayer stack on a substrate)', () => {
  it('stackResponse of one absorbing film on a semi-infinite substrate equals film_reflectance / film_transmittance', () => {
    const n = grid(2.6, 2.2, lam.length)
    const k = grid(0.8, 0.01, lam.length)
    const s = stackResponse(lam, [{ n, k, d: 250e-9 }], 1, { n: 1.52, k: 0 }, 0, 'unpolarized')
    expect(maxRelDiff(s.R, filmReflectance(lam, n, k, 250e-9, 1.52) as Float64Array)).toBeLessThan(1e-12)
    expect(maxRelDiff(s.T, filmTransmittance(lam, n, k, 250e-9, 1.52) as Float64Array)).toBeLessThan(1e-12)
    for (let i = 0; i < lam.length; i++) expect(Math.abs(s.absorbed[0][i] - (1 - s.R[i] - s.T[i]))).toBeLessThan(1e-12)
  })

  it('a quarter-wave layer reflects R = ((n0·ns − n1²)/(n0·ns + n1²))² at its design wavelength (Hecht, Optics, 4th ed., §9.7)', () => {
    for (const [n0, n1, ns] of [[1, 1.38, 1.52], [1.33, 1.6, 1.9], [1, Math.sqrt(1.52), 1.52]]) {
      const design = 550e-9
      const s = stackResponse(design, [{ n: n1, k: 0, d: design / (4 * n1) }], n0, { n: ns, k: 0 }, 0, 'unpolarized')
      const expected = ((n0 * ns - n1 * n1) / (n0 * ns + n1 * n1)) ** 2
      expect(Math.abs(s.R[0] - expected)).toBeLessThan(1e-15)
    }
  })

  it('a thick incoherent substrate alone matches reflectance_slab, transmittance_slab and absorptance_slab (Pankove (1971) ch. 4)', () => {
    const ns = 1.5
    const k = grid(1e-6, 3e-5, lam.length)
    const d = 1e-3
    const alpha = Float64Array.from(k, (kk, i) => (4 * Math.PI * kk) / lam[i])
    const R1 = ((ns - 1) / (ns + 1)) ** 2
    const s = stackResponse(lam, [], 1, { n: ns, k, d, coherent: false }, 0, 'unpolarized')
    expect(maxRelDiff(s.R, reflectanceSlab(alpha, d, R1) as Float64Array)).toBeLessThan(1e-12)
    expect(maxRelDiff(s.T, transmittanceSlab(alpha, d, R1) as Float64Array)).toBeLessThan(1e-12)
    expect(maxRelDiff(s.absorbed[0], absorptanceSlab(alpha, d, R1) as Float64Array)).toBeLessThan(1e-12)
    // the docs' worked example: a clear slide, R = 2·0.04/1.04, T = 0.96/1.04
    const clear = stackResponse(600e-9, [], 1, { n: 1.5, k: 0, d: 1e-3 }, 0, 'unpolarized')
    expect(clear.R[0]).toBeCloseTo(0.08 / 1.04, 14)
    expect(clear.T[0]).toBeCloseTo(0.96 / 1.04, 14)
  })

  it('a film on a thick slide: the front film is the coherent part, the slide adds its back face by intensity', () => {
    // by hand: front (film on semi-infinite glass) seen both ways, bare back face, geometric series of the slab
    const film = { n: 2.0, k: 0.05, d: 120e-9 }
    const lambda = 500e-9
    const f = tmm(lambda, [film], 1, 1.5)
    const r = tmm(lambda, [film], 1.5, 1)
    const Rb = 0.04
    const s = stackResponse(lambda, [film], 1, { n: 1.5, k: 0, d: 1e-3 }, 0, 'unpolarized')
    const D = 1 - Rb * (r.R as number)
    expect(s.T[0]).toBeCloseTo(((f.T as number) * (1 - Rb)) / D, 14)
    expect(s.R[0]).toBeCloseTo((f.R as number) + ((r.T as number) * (f.T as number) * Rb) / D, 14)
  })

  it('stackResponse conserves energy: R + T + ΣA = 1 to 1e-9 for absorbing stacks, any angle and polarisation', () => {
    const layers = [
      { n: 1.9, k: 0.02, d: 80e-9 },
      { n: grid(3.5, 2.8, lam.length), k: grid(1.2, 0, lam.length), d: 500e-9 },
      { n: 1.45, k: 0, d: 40e-9 },
    ]
    for (const angle of [0, 30 * deg, 60 * deg, 85 * deg])
      for (const pol of ['s', 'p', 'unpolarized'] as const)
        for (const sub of [{ n: 1.52, k: 0 }, { n: 1.52, k: 2e-6, d: 1e-3 }, { n: 1.52, k: 0.01, d: 2e-6, coherent: true }, { n: 3.9, k: 0.2 }]) {
          const s = stackResponse(lam, layers, 1, sub, angle, pol)
          for (let i = 0; i < lam.length; i++) {
            let sum = 0
            for (const a of s.absorbed) sum += a[i]
            expect(Math.abs(s.R[i] + s.T[i] + sum - 1)).toBeLessThan(1e-9)
            expect(Math.abs(s.A[i] - sum)).toBeLessThan(1e-15)
          }
        }
  })

  it('a transparent layer absorbs nothing; the absorbing one takes all of 1 − R − T', () => {
    const s = stackResponse(lam, [{ n: 1.45, k: 0, d: 100e-9 }, { n: 2.5, k: 0.3, d: 200e-9 }], 1, { n: 1.52, k: 0 }, 40 * deg, 'unpolarized')
    for (let i = 0; i < lam.length; i++) {
      expect(s.absorbed[0][i]).toBe(0)
      expect(Math.abs(s.absorbed[1][i] - (1 - s.R[i] - s.T[i]))).toBeLessThan(1e-12)
    }
  })

  it("one interface at oblique incidence gives Fresnel's R_s and R_p (Hecht §4.6.2); unpolarised light their mean", () => {
    for (const theta of [0, 10, 30, 45, 56, 70, 85].map((a) => a * deg)) {
      const { Rs, Rp } = fresnel(1, 1.5, theta)
      const s = stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, theta, 's')
      const p = stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, theta, 'p')
      const u = stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, theta, 'unpolarized')
      expect(Math.abs(s.R[0] - Rs)).toBeLessThan(1e-14)
      expect(Math.abs(p.R[0] - Rp)).toBeLessThan(1e-14)
      expect(Math.abs(u.R[0] - (Rs + Rp) / 2)).toBeLessThan(1e-14)
      expect(Math.abs(s.T[0] - (1 - Rs))).toBeLessThan(1e-14)
    }
  })

  it("R_p = 0 at Brewster's angle tan θB = ns/n0 (Hecht §8.6), while R_s does not vanish", () => {
    const thetaB = Math.atan(1.5)
    expect(stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, thetaB, 'p').R[0]).toBeLessThan(1e-30)
    expect(stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, thetaB, 's').R[0]).toBeCloseTo(fresnel(1, 1.5, thetaB).Rs, 14)
    // from water: tan θB = 1.52/1.33
    expect(stackResponse(600e-9, [], 1.33, { n: 1.52, k: 0 }, Math.atan(1.52 / 1.33), 'p').R[0]).toBeLessThan(1e-30)
  })

  it('a transparent film at 45° matches the Airy sum with tilted Fresnel coefficients (Born & Wolf §7.6.1), s and p', () => {
    for (const lambda of [450e-9, 550e-9, 700e-9])
      for (const p of [false, true]) {
        const s = stackResponse(lambda, [{ n: 2.1, k: 0, d: 180e-9 }], 1, { n: 1.52, k: 0 }, 45 * deg, p ? 'p' : 's')
        expect(Math.abs(s.R[0] - airyOblique(lambda, 1, 2.1, 180e-9, 1.52, 45 * deg, p))).toBeLessThan(1e-14)
      }
  })

  it('light from glass beyond the critical angle is totally reflected (Hecht §4.7): R = 1, T = 0', () => {
    // the stack's ambient is glass (1.5), the substrate air; sin θc = 1/1.5, θc = 41.8°
    for (const pol of ['s', 'p'] as const) {
      const s = stackResponse(600e-9, [], 1.5, { n: 1, k: 0 }, 60 * deg, pol)
      expect(s.R[0]).toBeCloseTo(1, 14)
      expect(s.T[0]).toBeCloseTo(0, 14)
    }
  })

  it('stackResponse refuses an angle of 90° or more and a negative extinction coefficient, naming them', () => {
    expect(() => stackResponse(600e-9, [], 1, { n: 1.5, k: 0 }, Math.PI / 2, 's')).toThrow(/angle of incidence must be at least 0° and below 90° \(got 90°\)/)
    expect(() => stackResponse(600e-9, [{ n: 2, k: -0.1, d: 1e-7 }], 1, { n: 1.5, k: 0 }, 0, 's')).toThrow(/extinction coefficient of layer 1/)
  })
})
