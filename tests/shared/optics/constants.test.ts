import { describe, expect, it } from 'vitest'
import { c0, eps0, h, hbar, kB, me, q, sigmaSB } from '../../../shared/optics/constants'
import { photonWavelength } from '../../../shared/optics/photons'
import { expectRel } from './close'

// CODATA 2018 recommended values (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021); NIST SP 961 wallet card).
describe('CODATA 2018 constants', () => {
  it('h, c0, q and kB are the exact 2019 SI defining values', () => {
    expect(h).toBe(6.62607015e-34)
    expect(c0).toBe(299792458)
    expect(q).toBe(1.602176634e-19)
    expect(kB).toBe(1.380649e-23)
  })
  it('eps0 and me carry the CODATA 2018 measured values', () => {
    expect(eps0).toBe(8.8541878128e-12) // 8.8541878128(13)e-12 F/m
    expect(me).toBe(9.1093837015e-31) // 9.1093837015(28)e-31 kg
  })
  it('hbar and sigmaSB agree with their CODATA 2018 values', () => {
    expectRel(hbar, 1.054571817e-34, 1e-9) // 1.054571817... J s (exact, quoted to 10 digits)
    expectRel(sigmaSB, 5.670374419e-8, 1e-9) // 5.670374419... W m^-2 K^-4 (exact, quoted to 10 digits)
  })
  it('hc/e = 1239.84198 eV·nm (CODATA 2018: 1239.841984... exact)', () => {
    expectRel(((h * c0) / q) * 1e9, 1239.84198, 5e-9)
    expectRel((photonWavelength(q) as number) * 1e9, 1239.841984, 1e-9)
  })
})
