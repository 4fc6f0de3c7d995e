// An invented demo scenario (fictional film "B"), shaped like the engine's result object (DESIGN §5).
import type { CellResult } from '../../../shared/schema/result'

export const E = Array.from({ length: 13 }, (_, i) => 1.2 + i * 0.1)
/** Direct-gap edge at 1.48 eV: (α[cm⁻¹]·E[eV])² = 2.5e9 · (E − 1.48), so α = 5e4·√(E − 1.48)/E above the gap. */
export const alpha = E.map((e) => (e > 1.48 ? (5e4 * Math.sqrt(e - 1.48)) / e : 0))

export function results(): Record<string, CellResult> {
  return {
    Eg: { index: 0, name: 'Eg', kind: 'parameter', status: 'ok', value: 1.48, unit: 'eV' },
    lambda_c: { index: 1, name: 'lambda_c', kind: 'parameter', status: 'ok', value: 800, unit: 'nm' },
    E: { index: 2, name: 'E', kind: 'formula', status: 'ok', value: E, unit: 'eV' },
    alpha: { index: 3, name: 'alpha', kind: 'formula', status: 'ok', value: alpha, unit: '1/cm' },
    d: { index: 4, name: 'd', kind: 'parameter', status: 'ok', value: 850, unit: 'nm' },
    filmB: {
      index: 5,
      name: 'filmB',
      kind: 'spectrum',
      status: 'ok',
      value: { columns: { wavelength: [900, 800, 700, null], T: [80, 40, 10, 5] }, units: { wavelength: 'nm', T: '%' } },
    },
    edge: { index: 6, name: 'edge', kind: 'fit', status: 'ok', value: { Eg: 1.4812, Eg_err: 0.0021, B: 3.9e-6, r2: 0.9994 }, unit: 'eV' },
    thick: {
      index: 7,
      name: 'thick',
      kind: 'sweep',
      status: 'ok',
      value: {
        parameter: [100, 200, 300],
        outputs: { A1: [E.map(() => 0.1), E.map(() => 0.2), E.map(() => 0.3)], Jsc: [10, 15, 18] },
      },
      unit: 'nm',
    },
    A1: { index: 8, name: 'A1', kind: 'formula', status: 'ok', value: E.map(() => 0.2), unit: '%' },
    Jsc: { index: 9, name: 'Jsc', kind: 'formula', status: 'ok', value: 15, unit: 'mA/cm^2' },
    broken: { index: 10, name: 'broken', kind: 'formula', status: 'error', error: 'unknown function "alpah_edge"' },
    waiting: { index: 11, name: 'waiting', kind: 'formula', status: 'blocked', error: 'blocked: input broken failed' },
    short: { index: 12, name: 'short', kind: 'formula', status: 'ok', value: [1, 2, 3], unit: '1/cm' },
    fig0: { index: 13, name: 'fig0', kind: 'figure', status: 'ok', value: null },
  }
}
