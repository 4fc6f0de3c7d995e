import { describe, expect, it } from 'vitest'
import { dependentsOf, referencedNames } from '../../../src/components/sheet/references'
import { copyName, defaultSeries, freeName, newCell } from '../../../src/components/sheet/newCells'
import { fitCautions, fitRows, taucSlopeUnit, valueWithError } from '../../../src/components/cells/fitReport'
import { blockedInput, prettyUnit, sentence, summarizeArray } from '../../../src/components/cells/resultFormat'
import type { FitCell, SheetCell } from '../../../shared/schema/sheet'
import type { CellResult } from '../../../shared/schema/result'

const cells: SheetCell[] = [
  { id: 'p', kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' },
  { id: 'e', kind: 'formula', name: 'E', source: 'grid(1*eV, 2*eV, 11)', unit: 'eV' },
  { id: 'a', kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 1e4)', unit: '1/cm' },
  { id: 'f', kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 1.9, unit: 'eV' },
  { id: 'g', kind: 'formula', name: 'lg', source: 'photon_wavelength(edge.Eg * eV)', unit: 'nm' },
  { id: 'z', kind: 'formula', name: 'other', source: '2 * 3' },
  { id: 'fig', kind: 'figure', traces: [{ x: 'E', y: 'alpha' }] },
]

describe('referencedNames and dependentsOf', () => {
  it('referencedNames(fit) names its x, y and model cells', () => {
    expect([...referencedNames(cells[3])].sort()).toEqual(['E', 'alpha'])
  })

  it('dependentsOf(cells, [Eg]) follows formulas, fits, member access and figures but leaves unrelated cells', () => {
    expect([...dependentsOf(cells, ['p'])].sort()).toEqual(['a', 'f', 'fig', 'g', 'p'])
  })
})

describe('new cell names', () => {
  it('freeName("p", cells) skips names in use', () => {
    const withP1: SheetCell[] = [...cells, { id: 'x', kind: 'parameter', name: 'p1', value: 0 }]
    expect(freeName('p', withP1)).toBe('p2')
  })

  it('copyName("Eg", cells) gives Eg_2, and a copy of Eg_2 gives Eg_3', () => {
    expect(copyName('Eg', cells)).toBe('Eg_2')
    const more: SheetCell[] = [...cells, { id: 'y', kind: 'parameter', name: 'Eg_2', value: 0 }]
    expect(copyName('Eg_2', more)).toBe('Eg_3')
  })
})

describe('newCell', () => {
  it('newCell("sweep") varies the last parameter above over its slider range, in its unit', () => {
    const above: SheetCell[] = [
      { id: 'd', kind: 'parameter', name: 'd', value: 900, unit: 'nm', min: 100, max: 3000 },
      { id: 'a', kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' },
    ]
    expect(newCell('sweep', above, above)).toEqual({ kind: 'sweep', name: 'sweep1', parameter: 'd', from: 100, to: 3000, steps: 11, unit: 'nm', outputs: ['A1'] })
  })
})

describe('result formatting', () => {
  it('summarizeArray([1, null, 3, NaN]) counts finite values and gives their range', () => {
    const s = summarizeArray([1, null, 3, NaN])
    expect([s.length, s.finite, s.min, s.max]).toEqual([4, 2, 1, 3])
  })

  it('blockedInput reads the failed input from the engine message', () => {
    expect(blockedInput({ index: 0, kind: 'formula', status: 'blocked', error: 'blocked: input u failed' })).toBe('u')
  })

  it('sentence(message) capitalises plain words but keeps a leading cell or function name as written', () => {
    expect(sentence('unknown name: nope')).toBe('Unknown name: nope.')
    expect(sentence('photon_wavelength: E should be an energy, not a length')).toBe('photon_wavelength: E should be an energy, not a length.')
    expect(sentence('alpha: the result is not finite.')).toBe('alpha: the result is not finite.')
    expect(sentence('')).toBe('')
  })

  it('valueWithError(6.7238e-6, 9.5e-9) shares one power of ten', () => {
    expect(valueWithError(6.7238e-6, 9.5e-9)).toBe('(6.7238 ± 0.0095)e-6')
  })

  it('valueWithError(x, err) says "exact fit" when the error is rounding noise below 1e-9 of the value', () => {
    expect(valueWithError(7.49490371e15, 2e-3)).toBe('7.4949e15 ± 0 (exact fit)')
    expect(valueWithError(1.5, 3.5e-17)).toBe('1.5 ± 0 (exact fit)')
  })

  it('valueWithError(1.48137, 0.00213) rounds to the error’s two significant figures', () => {
    expect(valueWithError(1.48137, 0.00213)).toBe('1.4814 ± 0.0021')
  })
})

describe('fit report', () => {
  const fit = cells[3] as FitCell & { id: string }
  const ok = (value: Record<string, number>): CellResult => ({ index: 3, id: 'f', name: 'edge', kind: 'fit', status: 'ok', value, unit: 'eV' })

  it('fitRows(tauc) lists Eg ± error in the fit unit, then B, R² and the point count', () => {
    const rows = fitRows(fit, ok({ Eg: 1.48137, Eg_err: 0.00213, B: 3.9e-6, r2: 0.9994, n: 40 }), () => undefined)
    expect(rows.map((r) => [r.quantity, r.value, r.unit])).toEqual([
      ['Eg', '1.4814 ± 0.0021', 'eV'],
      ['B', '3.9e-6', 'J·m⁻²'],
      ['R²', '0.99940', ''],
      ['points', '40', ''],
    ])
  })

  it('fitRows shows each output in the unit the result states: B in eV/cm², α₀ in 1/cm as given, χ² weighted', () => {
    const tauc = { ...ok({ Eg: 1.5, Eg_err: 0.01, B: 4e9, B_err: 1e7, r2: 0.999, n: 30, chi2: 27.5, reducedChi2: 0.98 }), units: { Eg: 'eV', Eg_err: 'eV', B: 'eV/cm^2', B_err: 'eV/cm^2', r2: '1', n: '1', chi2: '1', reducedChi2: '1' } }
    const rows = fitRows({ ...fit, sigma: 'salpha' }, tauc, () => undefined)
    expect(rows.find((r) => r.quantity === 'B')?.unit).toBe('eV/cm²')
    expect(rows.find((r) => r.quantity === 'χ²')).toMatchObject({ unit: '', meaning: 'Σ((y − fit)/σ)², weighted by the σ cell' })
    const urbach = { ...ok({ Eu: 22, Eu_err: 1, alpha0: 1.2e4, E0: 1450, r2: 0.99, n: 20 }), unit: 'meV', units: { Eu: 'meV', Eu_err: 'meV', alpha0: '1/cm', E0: 'meV', r2: '1', n: '1' } }
    const u = fitRows({ ...fit, method: 'urbach', unit: 'meV' }, urbach, () => undefined)
    expect(u.find((r) => r.quantity === 'α₀')).toMatchObject({ value: '12000', unit: 'cm⁻¹' })
  })

  it('taucSlopeUnit(r) gives the SI unit J^(1/r − 1)·m^(−1/r) of the Tauc slope for each usual exponent', () => {
    // (αE)^(1/r) = B·(E − Eg), α in 1/m and E in J: B carries (J/m)^(1/r) per joule
    expect(taucSlopeUnit(0.5)).toBe('J·m⁻²')
    expect(taucSlopeUnit(2)).toBe('J^(−1/2)·m^(−1/2)')
    expect(taucSlopeUnit(1.5)).toBe('J^(−1/3)·m^(−2/3)')
    expect(taucSlopeUnit(3)).toBe('J^(−2/3)·m^(−1/3)')
    expect(taucSlopeUnit(1)).toBe('m⁻¹')
    expect(taucSlopeUnit(0)).toBe('')
  })

  it('fitRows(tauc, r = 2) shows B in the indirect slope’s unit', () => {
    const indirect = { ...fit, r: 2 }
    const rows = fitRows(indirect, ok({ Eg: 1.1, Eg_err: 0.01, B: 120, r2: 0.99, n: 20 }), () => undefined)
    expect(rows.find((r) => r.quantity === 'B')?.unit).toBe('J^(−1/2)·m^(−1/2)')
  })

  it('fitCautions(tauc) is silent for a straight line in a window just above the gap', () => {
    expect(fitCautions(fit, ok({ Eg: 1.55, r2: 0.999, n: 30 }), cells, {})).toEqual([])
  })

  it('fitCautions(tauc) warns when the window starts below the fitted gap and when the line is not straight', () => {
    const notes = fitCautions(fit, ok({ Eg: 1.7, r2: 0.95, n: 30 }), cells, {})
    expect(notes).toHaveLength(2)
    expect(notes.join(' ')).toMatch(/not straight/)
    expect(notes.join(' ')).toMatch(/below the fitted gap/)
  })

  it('fitCautions(tauc) leaves out what the engine’s warnings on the same card already say', () => {
    const result = {
      ...ok({ Eg: 1.7, r2: 0.95, n: 30 }),
      warnings: [
        'the Tauc plot is not straight in this window (r² = 0.9500): move the window onto the linear part of the edge',
        'the fitted gap lies inside the window: the window probably reaches into the tail below the gap',
      ],
    }
    expect(fitCautions(fit, result, cells, {})).toEqual([])
  })

  it('fitCautions(urbach) warns when the window reaches above the gap of the Tauc fit on the same data', () => {
    const tail: FitCell & { id: string } = { id: 't', kind: 'fit', name: 'tail', method: 'urbach', x: 'E', y: 'alpha', from: 1.4, to: 1.6, unit: 'meV' }
    const results: Record<string, CellResult> = { f: ok({ Eg: 1.5, r2: 0.999, n: 30 }) }
    const notes = fitCautions(tail, { index: 7, kind: 'fit', status: 'ok', value: { Eu: 25, r2: 0.999, n: 20 } }, [...cells, tail], results)
    expect(notes).toHaveLength(1)
    expect(notes[0]).toMatch(/above the gap/)
  })
})

describe('prettyUnit on cards', () => {
  it('prettyUnit("1/(m^3*s)") writes the product with a centred dot and the power as a superscript', () => {
    expect(prettyUnit('1/(m^3*s)')).toBe('1/(m³·s)')
  })

  it('prettyUnit("1/cm") and prettyUnit("mA/cm^2") read as the figures write them', () => {
    expect(prettyUnit('1/cm')).toBe('cm⁻¹')
    expect(prettyUnit('mA/cm^2')).toBe('mA/cm²')
    expect(prettyUnit(undefined)).toBe('')
  })
})

describe('defaultSeries (a new figure’s first trace)', () => {
  const sheet: SheetCell[] = [
    { id: 'p', kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' },
    { id: 'e', kind: 'formula', name: 'E', source: 'grid(1*eV, 2*eV, 11)', unit: 'eV' },
    { id: 'a', kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 1e4)', unit: '1/cm' },
    { id: 'd', kind: 'parameter', name: 'd', value: 500, unit: 'nm' },
    { id: 'f', kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' },
    { id: 'm', kind: 'formula', name: 'A_mean', source: 'mean(A1)', unit: '%' },
  ]
  const lengths: Record<string, number> = { Eg: 1, E: 11, alpha: 11, d: 1, A1: 11, A_mean: 1 }

  it('newCell("figure") plots the latest array against the grid it is computed on, skipping a scalar below it', () => {
    expect(newCell('figure', sheet, sheet, (n) => lengths[n])).toEqual({ kind: 'figure', name: 'fig1', traces: [{ x: 'E', y: 'A1' }] })
  })

  it('defaultSeries never pairs the last two cells when they are a scalar and an array', () => {
    expect(defaultSeries(sheet.slice(0, 3), (n) => lengths[n])).toEqual({ x: 'E', y: 'alpha' })
    expect(defaultSeries(sheet.slice(0, 2), (n) => lengths[n])).toBeUndefined()
  })

  it('defaultSeries without results follows the sources; with arrays of different lengths it offers nothing', () => {
    expect(defaultSeries(sheet.slice(0, 3))).toEqual({ x: 'E', y: 'alpha' })
    expect(defaultSeries(sheet.slice(0, 3), (n) => ({ E: 11, alpha: 12 })[n])).toBeUndefined()
  })

  it('defaultSeries falls back to the first two columns of a spectrum', () => {
    const spec: SheetCell[] = [{ id: 's', kind: 'spectrum', name: 'filmB', columns: { wavelength: { unit: 'nm', values: [400, 500] }, T: { unit: '%', values: [10, 20] } } }]
    expect(defaultSeries(spec)).toEqual({ x: 'filmB.wavelength', y: 'filmB.T' })
  })
})
