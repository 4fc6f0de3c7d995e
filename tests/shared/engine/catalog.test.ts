import { describe, expect, it } from 'vitest'
import { readFileSync, readdirSync } from 'node:fs'
import { join } from 'node:path'
import * as optics from '../../../shared/optics/index'
import { libraryCatalog } from '../../../shared/engine/index'
import { PHYSICS } from '../../../shared/engine/functions/physics'
import { formulaParser } from '../../../shared/engine/parse'
import { registerFunctions } from '../../../shared/engine/functions/registry'

/** Every function name of DESIGN §6, in its groups (the names are part of the product). */
const DESIGN_FUNCTIONS: Record<string, string[]> = {
  'grids and arrays': ['grid', 'loggrid', 'len', 'sum', 'mean', 'min', 'max', 'first', 'last', 'at', 'where', 'clip', 'interpolate', 'integrate', 'cumulative', 'slope', 'crossing'],
  photons: ['photon_energy', 'photon_wavelength', 'wavenumber', 'photon_frequency', 'kT'],
  'band-edge absorption': ['alpha_tauc', 'alpha_direct', 'alpha_indirect', 'alpha_indirect_phonon', 'alpha_urbach', 'alpha_edge'],
  'optical constants': ['alpha_from_k', 'k_from_alpha', 'n_from_eps', 'k_from_eps', 'cauchy_n', 'sellmeier_n', 'drude_eps1', 'drude_eps2', 'tauc_lorentz_eps2', 'tauc_lorentz_eps1'],
  'films and slabs': ['reflectance', 'absorbed_fraction', 'absorption_depth', 'thickness_for', 'transmittance_slab', 'reflectance_slab', 'absorptance_slab', 'alpha_from_transmittance', 'alpha_from_absorbance', 'absorptance_lambertian', 'film_reflectance', 'film_transmittance'],
  temperature: ['varshni'],
  'spectra and devices': ['planck_photon_radiance', 'photon_flux', 'photocurrent', 'detailed_balance', 'detailed_balance_jsc', 'detailed_balance_voc', 'detailed_balance_ff'],
}

describe('libraryCatalog', () => {
  it('libraryCatalog lists every DESIGN §6 function in its group, with a signature and a one-line doc', () => {
    const { functions } = libraryCatalog()
    for (const [group, names] of Object.entries(DESIGN_FUNCTIONS)) {
      for (const name of names) {
        const f = functions.find((x) => x.name === name)
        expect(f, name).toBeDefined()
        expect(f?.group, name).toBe(group)
        expect(f?.signature.startsWith(`${name}(`), name).toBe(true)
        expect(f?.doc.length, name).toBeGreaterThan(10)
      }
    }
  })

  it('libraryCatalog signatures keep the DESIGN argument orders', () => {
    const sig = (n: string): string | undefined => libraryCatalog().functions.find((f) => f.name === n)?.signature
    expect(sig('alpha_edge')).toBe('alpha_edge(E, Eg, B, r, Eu)')
    expect(sig('interpolate')).toBe('interpolate(xq, x, y)')
    expect(sig('integrate')).toBe('integrate(y, x)')
    expect(sig('crossing')).toBe('crossing(x, y, level)')
    expect(sig('detailed_balance')).toBe('detailed_balance(Eg, T_cell, lambda, flux)')
    expect(sig('reflectance')).toBe('reflectance(n, k, [n0])')
    expect(sig('sellmeier_n')).toBe('sellmeier_n(lambda, B1, C1, B2, C2, B3, C3)')
  })

  it('libraryCatalog signatures are the DESIGN §6 table\'s, every argument in order', () => {
    // the function column of DESIGN §6, copied as written there
    const design = 'grid(from, to, n), loggrid(from, to, n), len(a), sum(a), mean(a), min(a), max(a), first(a), last(a), ' +
      'at(a, i), where(cond, a, b), clip(x, lo, hi), interpolate(xq, x, y), integrate(y, x), cumulative(y, x), slope(y, x), ' +
      'crossing(x, y, level), photon_energy(lambda), photon_wavelength(E), wavenumber(lambda), photon_frequency(lambda), kT(T), ' +
      'alpha_tauc(E, Eg, B, r), alpha_direct(E, Eg, B), alpha_indirect(E, Eg, B), alpha_indirect_phonon(E, Eg, Ep, T, C), ' +
      'alpha_urbach(E, alpha0, E0, Eu), alpha_edge(E, Eg, B, r, Eu), alpha_from_k(k, lambda), k_from_alpha(alpha, lambda), ' +
      'n_from_eps(eps1, eps2), k_from_eps(eps1, eps2), cauchy_n(lambda, A, B, C), sellmeier_n(lambda, B1, C1, B2, C2, B3, C3), ' +
      'drude_eps1(E, Ep, gamma, eps_inf), drude_eps2(E, Ep, gamma, eps_inf), tauc_lorentz_eps2(E, A, E0, C, Eg), ' +
      'tauc_lorentz_eps1(E, A, E0, C, Eg, eps_inf), reflectance(n, k), absorbed_fraction(alpha, d), absorption_depth(alpha), ' +
      'thickness_for(alpha, fraction), transmittance_slab(alpha, d, R), reflectance_slab(alpha, d, R), absorptance_slab(alpha, d, R), ' +
      'alpha_from_transmittance(T, R, d), alpha_from_absorbance(A10, d), absorptance_lambertian(alpha, d, n), ' +
      'film_reflectance(lambda, n, k, d, n_sub), film_transmittance(lambda, n, k, d, n_sub), varshni(T, Eg0, a, b), ' +
      'planck_photon_radiance(lambda, T), photon_flux(lambda, irradiance), photocurrent(lambda, absorptance, flux), ' +
      'detailed_balance(Eg, T_cell, lambda, flux)'
    const { functions } = libraryCatalog()
    for (const m of design.matchAll(/(\w+)\(([^)]*)\)/g)) {
      const f = functions.find((x) => x.name === m[1])
      const params = (f?.signature ?? '').replace(/^\w+\(|\)$/g, '').replace(/[[\]]/g, '').split(', ')
      // optional extras may follow (reflectance's ambient index n0; min and max take more arrays)
      expect(params.slice(0, m[2].split(', ').length), m[1]).toEqual(m[2].split(', '))
    }
  })

  it('every DESIGN §6 function is implemented with a doc comment giving units, range, source and a worked example', () => {
    const root = join(__dirname, '../../../shared')
    const text = [join(root, 'engine/functions/arrays.ts'), ...readdirSync(join(root, 'optics')).map((f) => join(root, 'optics', f))]
      .filter((f) => f.endsWith('.ts')).map((f) => readFileSync(f, 'utf8')).join('\n')
    for (const name of Object.values(DESIGN_FUNCTIONS).flat()) {
      const impl = name.includes('_') || !DESIGN_FUNCTIONS['grids and arrays'].includes(name)
        ? name.replace(/_([a-z0-9])/g, (_m, ch: string) => ch.toUpperCase()) : name
      const m = new RegExp(`/\\*\\*((?:(?!\\*/)[\\s\\S])*)\\*/\\s*export function ${impl}\\(`).exec(text)
      expect(m, `${name} (${impl}) has a doc comment`).not.toBeNull()
      const doc = m![1]
      expect(doc, `${name}: units`).toMatch(/Units|result:|, (m|J|K|1\/m)\b/)
      expect(doc, `${name}: valid range`).toMatch(/Range|[(（][<>≥≤]|≥|≤|> 0|0–1|between/)
      expect(doc, `${name}: source`).toMatch(/Source/)
      expect(doc, `${name}: worked example`).toMatch(/@example|Example/)
    }
  })

  it('libraryCatalog lists the formula units and the constants, and no constant named E', () => {
    const c = libraryCatalog()
    for (const u of ['nm', 'um', 'eV', 'meV', 'K', 'mA', 'W']) expect(c.units).toContain(u)
    expect(c.constants.map((x) => x.name)).toEqual(['pi', 'euler', 'h', 'hbar', 'c0', 'q', 'kB', 'eps0', 'me'])
    expect(c.constants.find((x) => x.name === 'E')).toBeUndefined()
  })

  it('every physics entry is wired to an optics function of the same arity', () => {
    const table = optics as unknown as Record<string, unknown>
    for (const f of PHYSICS) {
      const camel = f.name.replace(/_([a-z])/g, (_m, ch: string) => ch.toUpperCase())
      const impl = table[camel] ?? table[f.name]
      expect(typeof impl, `${f.name} → ${camel}`).toBe('function')
      // optional trailing arguments may have defaults, which Function.length does not count
      expect((impl as (...a: unknown[]) => unknown).length, f.name).toBeGreaterThanOrEqual(f.minArgs)
    }
  })

  it('the library is registered on the parser\'s functions table, which has no prototype', () => {
    registerFunctions()
    const table = formulaParser().functions as Record<string, unknown>
    expect(Object.getPrototypeOf(table)).toBeNull()
    for (const name of Object.values(DESIGN_FUNCTIONS).flat()) expect(typeof table[name], name).toBe('function')
    expect('constructor' in table).toBe(false)
  })
})
