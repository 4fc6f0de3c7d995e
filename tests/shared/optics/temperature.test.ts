import { describe, expect, it } from 'vitest'
import { varshni } from '../../../shared/optics/temperature'
import { arr, el, eV, expectRel } from './close'

const meV = 1e-3 * eV

// Varshni parameters (Eg(0 K), α, β) of I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001),
// Tables (Γ-valley gaps; GaP's X gap), recalled from memory, with the room-temperature gaps the review quotes.
const VMR = [
  { name: 'GaAs', Eg0: 1.519, a: 0.5405, b: 204, at300: 1.422 },
  { name: 'InP', Eg0: 1.4236, a: 0.363, b: 162, at300: 1.353 },
  { name: 'InAs', Eg0: 0.417, a: 0.276, b: 93, at300: 0.354 },
  { name: 'GaSb', Eg0: 0.812, a: 0.417, b: 140, at300: 0.727 },
  { name: 'GaP (X)', Eg0: 2.35, a: 0.5771, b: 372, at300: 2.273 },
]

describe('varshni(T, Eg0, a, b)', () => {
  it('varshni at 0 K is Eg0 exactly', () => {
    expect(varshni(0, 1.519 * eV, 0.5405 * meV, 204)).toBe(1.519 * eV)
  })
  for (const m of VMR) {
    it(`varshni(T, Eg0, a, b) gives ${m.name} ${m.at300} eV at 300 K (Vurgaftman et al. 2001)`, () => {
      const Eg = (varshni(300, m.Eg0 * eV, m.a * meV, m.b) as number) / eV
      expect(Math.abs(Eg - m.at300)).toBeLessThan(0.0006) // the review's three decimals
      expectRel(Eg, m.Eg0 - (m.a * 1e-3 * 300 * 300) / (300 + m.b), 1e-12)
    })
  }
  it('varshni gives silicon 1.1245 eV at 300 K with Eg0 = 1.170 eV, a = 4.73e-4 eV/K, b = 636 K (S. M. Sze, K. K. Ng, Physics of Semiconductor Devices, 3rd ed. (2007), from memory)', () => {
    expectRel((varshni(300, 1.17 * eV, 4.73e-4 * eV, 636) as number) / eV, 1.1245, 1e-4)
  })
  it('varshni falls monotonically with temperature and is quadratic at low T (≈ Eg0 − aT²/b)', () => {
    const T = arr(0, 50, 100, 200, 300, 400)
    const Eg = varshni(T, 1.519 * eV, 0.5405 * meV, 204)
    for (let i = 1; i < T.length; i++) expect(el(Eg, i)).toBeLessThan(el(Eg, i - 1))
    expectRel(1.519 * eV - (varshni(1, 1.519 * eV, 0.5405 * meV, 204) as number), (0.5405 * meV) / 205, 1e-9)
  })
  it('varshni refuses a negative temperature', () => {
    expect(() => varshni(-1, 1.5 * eV, 0.5 * meV, 200)).toThrow(/varshni: the temperature T must be zero or positive/)
  })
  it('worked example of the doc comment', () => {
    expectRel(varshni(300, 1.519 * eV, 0.5405 * meV, 204), 2.279068e-19, 1e-6)
  })
})
