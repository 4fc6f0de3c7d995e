import { describe, expect, it } from 'vitest'
import { windowSensitivity } from '../../../shared/fitting'
import { alphaDirect, alphaEdge, alphaUrbach } from '../../../shared/optics'
import { eV, expectRel } from '../optics/close'

const B5 = (4e9 * eV) / 1e-4 // the DESIGN §5 example sheet's 4e9 eV/cm²
const grid = (from: number, to: number, n: number): Float64Array =>
  Float64Array.from({ length: n }, (_, i) => (from + ((to - from) * i) / (n - 1)) * eV)

/**
 * An independent Tauc gap: the least-squares line of (αE)^(1/r) on E from the raw normal equations
 * (slope = (nΣxy − ΣxΣy)/(nΣx² − (Σx)²), intercept = (Σy − slope·Σx)/n, Eg = −intercept/slope), in eV so the sums
 * stay well scaled. Draper & Smith, Applied Regression Analysis (1998), eq. 1.2.9.
 */
function independentGap(E: Float64Array, alpha: Float64Array, r: number, lo: number, hi: number): number {
  let n = 0, sx = 0, sy = 0, sxy = 0, sxx = 0
  for (let i = 0; i < E.length; i++) {
    if (E[i] < lo || E[i] > hi) continue
    const x = E[i] / eV
    const y = (alpha[i] * 1e-2 * x) ** (1 / r)
    n++; sx += x; sy += y; sxy += x * y; sxx += x * x
  }
  const slope = (n * sxy - sx * sy) / (n * sxx - sx * sx)
  return (-(sy - slope * sx) / n / slope) * eV
}

describe('windowSensitivity(E, alpha, from, to, options)', () => {
  it('windowSensitivity of a perfectly straight Tauc segment (alpha_direct above Eg) keeps Eg = 1.5 eV for every shifted window', () => {
    // closed form: (αE)² = B(E − Eg) exactly above Eg, so any window above Eg gives the same line
    const E = grid(1.2, 2.4, 601)
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    const s = windowSensitivity(E, alpha, 1.6 * eV, 2.0 * eV, { method: 'tauc', r: 0.5 })!
    expect(s.quantity).toBe('Eg')
    expect(s.points).toHaveLength(18)
    expect(s.failed).toBe(0)
    for (const p of s.points) expectRel(p.value!, 1.5 * eV, 1e-11)
    expect(s.spread).toBeLessThan(1e-11 * 1.5 * eV)
  })

  it('windowSensitivity moves each end by steps of 5 % of the window, the other end held', () => {
    const E = grid(1.2, 2.4, 601)
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    const s = windowSensitivity(E, alpha, 2.0 * eV, 1.6 * eV, { method: 'tauc', r: 0.5, steps: 2 })!
    expectRel(s.stepSize, 0.02 * eV, 1e-12)
    const fromEnds = s.points.filter((p) => p.end === 'from')
    expect(fromEnds.map((p) => p.step)).toEqual([-2, -1, 0, 1, 2])
    fromEnds.forEach((p, i) => {
      expectRel(p.from, (1.56 + 0.02 * i) * eV, 1e-12)
      expect(p.to).toBe(2.0 * eV)
    })
    const toEnds = s.points.filter((p) => p.end === 'to')
    toEnds.forEach((p, i) => {
      expect(p.from).toBe(1.6 * eV)
      expectRel(p.to, (1.96 + 0.02 * i) * eV, 1e-12)
    })
  })

  it('windowSensitivity of an edge with an Urbach tail agrees window by window with an independent least-squares gap, and the gap moves as the low end enters the tail', () => {
    const E = grid(1.2, 2.4, 601)
    const alpha = alphaEdge(E, 1.48 * eV, B5, 0.5, 0.05 * eV) as Float64Array
    const s = windowSensitivity(E, alpha, 1.5 * eV, 1.8 * eV, { method: 'tauc', r: 0.5, steps: 4, fraction: 0.1 })!
    for (const p of s.points) {
      if (p.value === undefined) continue
      expectRel(p.value, independentGap(E, alpha, 0.5, p.from, p.to), 1e-9)
    }
    const lowest = s.points.find((p) => p.end === 'from' && p.step === -4)!
    const highest = s.points.find((p) => p.end === 'from' && p.step === 4)!
    // reaching down into the tail pulls the straight line's intercept below the model's gap
    expect(lowest.value!).toBeLessThan(highest.value!)
    expect(s.spread).toBeGreaterThan(0)
    expect(s.spreadInErrors).toBeGreaterThan(1)
  })

  it('windowSensitivity of a pure exponential tail keeps Eu = 20 meV for every window (Urbach)', () => {
    const E = grid(1.2, 1.5, 301)
    const alpha = alphaUrbach(E, 1e5, 1.5 * eV, 0.02 * eV) as Float64Array
    const s = windowSensitivity(E, alpha, 1.3 * eV, 1.45 * eV, { method: 'urbach' })!
    expect(s.quantity).toBe('Eu')
    for (const p of s.points) expectRel(p.value!, 0.02 * eV, 1e-9)
  })

  it('windowSensitivity counts shifted windows that give no fit and answers null when the window itself gives none', () => {
    const E = grid(1.2, 2.4, 13) // 0.1 eV apart
    const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
    // window 1.55–1.85 eV holds 3 points (1.6, 1.7, 1.8); moving either end inwards by 0.15 eV leaves 2
    const s = windowSensitivity(E, alpha, 1.55 * eV, 1.85 * eV, { method: 'tauc', r: 0.5, steps: 2, fraction: 0.5 })!
    expect(s.failed).toBeGreaterThan(0)
    expect(s.points.filter((p) => p.value === undefined).length).toBe(s.failed)
    expect(windowSensitivity(E, alpha, 1.6 * eV, 1.65 * eV, { method: 'tauc', r: 0.5 })).toBeNull()
  })
})
