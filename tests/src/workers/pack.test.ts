import { describe, expect, it } from 'vitest'
import { packResults, unpackResults } from '../../../src/workers/pack'
import type { CellResult } from '../../../shared/schema/result'

const grid = <T,>(n: number, f: (i: number) => T): T[] => Array.from({ length: n }, (_, i) => f(i))

describe('packResults and unpackResults', () => {
  it('packResults(results) moves long arrays and sweep tables into transferable buffers, and unpackResults gives the same results back', () => {
    const results: CellResult[] = [
      { index: 0, id: 'p', name: 'Eg', kind: 'parameter', status: 'ok', value: 1.5, unit: 'eV' },
      { index: 1, id: 'e', name: 'E', kind: 'formula', status: 'ok', value: grid(601, (i) => 1.2 + i * 0.002), unit: 'eV' },
      { index: 2, id: 's', name: 'thick', kind: 'sweep', status: 'ok', value: { parameter: grid(30, (i) => 100 * (i + 1)), outputs: { A: grid(30, (j) => grid(601, (i) => (i * j) % 7)), J: grid(30, (j) => j / 3) } } },
      { index: 3, id: 'f', name: 'edge', kind: 'fit', status: 'ok', value: { Eg: 1.48, Eg_err: 0.002, residuals: grid(300, (i) => Math.sin(i)) } },
      { index: 4, id: 'x', name: 'bad', kind: 'formula', status: 'error', error: 'unknown name: nope' },
    ]
    const { results: packed, transfer } = packResults(results)
    // E, the A table and the residuals travel as buffers; the 30 numbers of J and of the parameter do not need to
    expect(transfer).toHaveLength(3)
    expect(transfer.reduce((n, b) => n + b.byteLength, 0)).toBe(8 * (601 + 30 * 601 + 300))
    expect(unpackResults(packed)).toEqual(results)
  })

  it('packResults(results) leaves arrays holding gaps (null) as they are', () => {
    const value = [...grid(400, (i) => i), null]
    const { results, transfer } = packResults([{ index: 0, kind: 'formula', status: 'ok', value: value as number[] }])
    expect(transfer).toHaveLength(0)
    expect(unpackResults(results)[0].value).toEqual(value)
  })
})
