import { describe, expect, it } from 'vitest'
import { ALPHA_ROUTES, extractAlphaCells, guessColumnRole, type ExtractAlphaSpec } from '../../../shared/doc/extractAlpha'
import { alphaDirect, photonEnergy, reflectance, transmittanceSlab } from '../../../shared/optics'
import { eV } from '../optics/close'
import { pick, run } from '../engine/helpers'

// A known α (a direct edge at 1.5 eV, the DESIGN §5 example's B = 4e9 eV/cm²) turned into what an instrument
// measures with the forward formulas: transmittance_slab (incoherent slab, J. I. Pankove, Optical Processes in
// Semiconductors (1971), ch. 4; D. K. Schroder (2006), ch. 10) and reflectance (Fresnel at normal incidence). The
// extracted α must come back.
const B5 = (4e9 * eV) / 1e-4
const d = 500e-9
const lambdaNm = Array.from({ length: 251 }, (_, i) => 500 + 2 * i)
const lambda = Float64Array.from(lambdaNm, (x) => x * 1e-9)
const E = photonEnergy(lambda) as Float64Array
const alpha = alphaDirect(E, 1.5 * eV, B5) as Float64Array
const nFilm = Float64Array.from(E, (e) => 3 + 0.2 * (e / eV - 1.5)) // a mildly dispersive index
const Rface = reflectance(nFilm, 0) as Float64Array
const alphaMax = Math.max(...alpha)

function spectrum(name: string, columns: Record<string, { unit: string; values: number[]; quantity?: string }>) {
  return { kind: 'spectrum', name, columns }
}

/** Runs the spectrum cells plus the generated ones; returns the α cell's values in 1/m. */
function extracted(spec: ExtractAlphaSpec, spectra: unknown[]): { alpha: number[]; result: ReturnType<typeof run>; names: ReturnType<typeof extractAlphaCells>['names'] } {
  const plan = extractAlphaCells(spec, ['filmB', 'glass'])
  const result = run([...spectra, ...plan.cells])
  const a = pick(result, plan.names.alpha)
  if (a.status !== 'ok') throw new Error(`${a.name}: ${a.error}`)
  expect(a.unit).toBe('1/cm')
  return { alpha: (a.value as number[]).map((v) => v * 100), result, names: plan.names }
}

function expectAlphaBack(got: number[]): void {
  expect(got).toHaveLength(alpha.length)
  got.forEach((g, i) => {
    if (!(Math.abs(g - alpha[i]) <= 1e-9 * alphaMax)) throw new Error(`α at ${lambdaNm[i]} nm: got ${g}, made from ${alpha[i]}`)
  })
}

describe('extractAlphaCells(spec, taken)', () => {
  it('extractAlphaCells from T (in %) and R gives cells whose α is the α the spectrum was made from', () => {
    const T = transmittanceSlab(alpha, d, Rface) as Float64Array
    const film = spectrum('filmB', {
      wavelength: { unit: 'nm', values: lambdaNm, quantity: 'wavelength' },
      T: { unit: '%', values: Array.from(T, (t) => t * 100), quantity: 'T' },
      R: { unit: '', values: Array.from(Rface), quantity: 'R' },
    })
    const { alpha: got, names } = extracted(
      { spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'transmittance-reflectance', thickness: { value: 500, unit: 'nm' }, T: 'T', R: 'R' },
      [film],
    )
    expect(names.thickness).toBe('d_filmB')
    expectAlphaBack(got)
  })

  it('extractAlphaCells from T alone, with R from a refractive index, adds n and R cells and recovers α', () => {
    const R = reflectance(3.2, 0) as number
    const T = transmittanceSlab(alpha, d, R) as Float64Array
    const film = spectrum('filmB', { wavelength: { unit: 'nm', values: lambdaNm }, T: { unit: '', values: Array.from(T) } })
    const plan = extractAlphaCells(
      { spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'transmittance-index', thickness: { value: 0.5, unit: 'um' }, T: 'T', n: 3.2 },
      ['filmB'],
    )
    expect(plan.cells.map((c) => c.name)).toEqual(['d_filmB', 'n_filmB', 'R_filmB', 'alpha_filmB'])
    const result = run([film, ...plan.cells])
    // R = ((n − 1)/(n + 1))² = (2.2/4.2)² = 27.44 % (Fresnel, normal incidence)
    expect(pick(result, 'R_filmB').value as number).toBeCloseTo(((2.2 / 4.2) ** 2) * 100, 10)
    expectAlphaBack((pick(result, 'alpha_filmB').value as number[]).map((v) => v * 100))
  })

  it('extractAlphaCells from absorbance recovers α = ln(10)·A/d (Beer–Lambert, IUPAC Gold Book "absorbance")', () => {
    const A = Array.from(alpha, (a) => (a * d) / Math.LN10)
    const film = spectrum('filmB', { wavelength: { unit: 'nm', values: lambdaNm }, A10: { unit: '', values: A, quantity: 'A10' } })
    const { alpha: got } = extracted(
      { spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'absorbance', thickness: { value: 500, unit: 'nm' }, A10: 'A10' },
      [film],
    )
    expectAlphaBack(got)
  })

  it('extractAlphaCells with a substrate correction divides by the bare substrate interpolated onto the film grid and recovers α', () => {
    // the substrate is measured on another grid; its T is linear in λ, so linear interpolation is exact
    const subNm = Array.from({ length: 61 }, (_, i) => 450 + 10 * i)
    const Tsub = (nm: number) => 0.88 + 0.0001 * (nm - 450)
    const glass = spectrum('glass', { wavelength: { unit: 'nm', values: subNm }, T: { unit: '%', values: subNm.map((x) => Tsub(x) * 100) } })
    const film = spectrum('filmB', {
      wavelength: { unit: 'nm', values: lambdaNm },
      T: { unit: '%', values: lambdaNm.map((x, i) => Tsub(x) * Math.exp(-alpha[i] * d) * 100) },
    })
    const { alpha: got, result } = extracted(
      {
        spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'substrate', thickness: { value: 500, unit: 'nm' }, T: 'T',
        substrate: { spectrum: 'glass', x: 'wavelength', T: 'T' },
      },
      [glass, film],
    )
    expect(pick(result, 'Trel_filmB').status).toBe('ok')
    expectAlphaBack(got)
  })

  it('extractAlphaCells with a Tauc fit adds the photon energy and a fit whose Eg is the 1.5 eV the data were made with', () => {
    const T = transmittanceSlab(alpha, d, Rface) as Float64Array
    const film = spectrum('filmB', {
      wavelength: { unit: 'nm', values: lambdaNm },
      T: { unit: '%', values: Array.from(T, (t) => t * 100) },
      R: { unit: '%', values: Array.from(Rface, (r) => r * 100) },
    })
    const { result, names } = extracted(
      {
        spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'transmittance-reflectance', thickness: { value: 500, unit: 'nm' },
        T: 'T', R: 'R', tauc: { r: 0.5, from: 1.6, to: 2.2 }, figure: true,
      },
      [film],
    )
    expect(names).toEqual({ thickness: 'd_filmB', alpha: 'alpha_filmB', energy: 'E_filmB', fit: 'gap_filmB' })
    const Ecell = pick(result, 'E_filmB')
    expect(Ecell.unit).toBe('eV')
    // hc/λ at 500 nm = 1239.84198/500 eV (CODATA 2018 hc)
    expect((Ecell.value as number[])[0]).toBeCloseTo(1239.841984 / 500, 6)
    const fit = pick(result, 'gap_filmB')
    expect(fit.status).toBe('ok')
    expect((fit.value as { Eg: number }).Eg).toBeCloseTo(1.5, 9)
    expect(pick(result, 'fig_alpha_filmB').status).toBe('ok')
  })

  it('extractAlphaCells takes the photon energy from an energy or a wavenumber column as it is', () => {
    const film = spectrum('s1', {
      E: { unit: 'eV', values: [1.5, 2, 2.5] },
      nu: { unit: '1/cm', values: [8065.54, 12000, 16000] },
      A10: { unit: '', values: [0.1, 0.2, 0.3] },
    })
    for (const [column, quantity, first] of [['E', 'energy', 1.5], ['nu', 'wavenumber', 1.0000]] as const) {
      const plan = extractAlphaCells({ spectrum: 's1', x: { column, quantity }, route: 'absorbance', thickness: { value: 1, unit: 'um' }, A10: 'A10', figure: true }, ['s1'])
      const r = run([film, ...plan.cells])
      // 8065.54 cm⁻¹ is 1 eV (hc = 1.23984198e-4 eV·cm, CODATA 2018)
      expect((pick(r, 'E_s1').value as number[])[0]).toBeCloseTo(first, 4)
    }
  })

  it('extractAlphaCells keeps clear of names already in the sheet and says which column is missing', () => {
    const plan = extractAlphaCells(
      { spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'absorbance', thickness: { value: 1, unit: 'um' }, A10: 'A' },
      ['filmB', 'd_filmB', 'alpha_filmB', 'alpha_filmB_2'],
    )
    expect(plan.names).toEqual({ thickness: 'd_filmB_2', alpha: 'alpha_filmB_3' })
    expect(() =>
      extractAlphaCells({ spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'transmittance-reflectance', thickness: { value: 1, unit: 'um' }, T: 'T' }, []),
    ).toThrow('Choose the reflectance column.')
    expect(() =>
      extractAlphaCells({ spectrum: 'filmB', x: { column: 'wavelength', quantity: 'wavelength' }, route: 'absorbance', thickness: { value: 0, unit: 'um' }, A10: 'A' }, []),
    ).toThrow('The thickness must be a positive number.')
  })

  it('ALPHA_ROUTES give every route its formula and a note saying fringes are not removed', () => {
    expect(ALPHA_ROUTES.map((r) => r.route)).toEqual(['transmittance-reflectance', 'transmittance-index', 'absorbance', 'substrate'])
    for (const r of ALPHA_ROUTES) {
      expect(r.formula).toMatch(/^α = /)
      expect(r.note).toContain('interference fringes of a thin film are not removed')
    }
  })

  it('guessColumnRole reads the declared quantity first, then the name, then the unit', () => {
    expect(guessColumnRole('col1', { unit: '%', quantity: 'T' })).toBe('T')
    expect(guessColumnRole('R', { unit: '%' })).toBe('R')
    expect(guessColumnRole('lambda', { unit: 'nm' })).toBe('wavelength')
    expect(guessColumnRole('x', { unit: 'eV' })).toBe('energy')
    expect(guessColumnRole('Abs', { unit: '' })).toBe('A10')
    expect(guessColumnRole('signal', { unit: '' })).toBeNull()
  })
})
