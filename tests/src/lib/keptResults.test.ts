import { describe, expect, it } from 'vitest'
import { KEPT_RESULTS_FORMAT, packKeptResults, unpackKeptResults } from '../../../src/lib/keptResults'
import type { CellResult } from '../../../shared/schema/result'

const ok: CellResult = { index: 0, id: 'c1', name: 'Eg', kind: 'parameter', status: 'ok', value: 1.5, unit: 'eV' }
const failed: CellResult = { index: 1, id: 'c2', name: 'alpha', kind: 'formula', status: 'error', error: 'unknown name "Egg"' }

describe('kept results', () => {
  it('packKeptResults keeps the results that carry a cell id, and unpackKeptResults reads them back', () => {
    const packed = packKeptResults({ c1: ok, c2: failed, x: { index: 2, kind: 'note', status: 'ok' } }, 1000)
    expect(packed).toEqual({ format: KEPT_RESULTS_FORMAT, version: 1, savedAt: 1000, results: [ok, failed] })
    // what IndexedDB hands back is a structured clone
    expect(unpackKeptResults(structuredClone(packed))).toEqual([ok, failed])
  })
  it('unpackKeptResults reads nothing from a missing, foreign or older value, and drops entries that are not results', () => {
    expect(unpackKeptResults(undefined)).toEqual([])
    expect(unpackKeptResults('results')).toEqual([])
    expect(unpackKeptResults({ format: 'other', version: 1, results: [ok] })).toEqual([])
    expect(unpackKeptResults({ format: KEPT_RESULTS_FORMAT, version: 2, results: [ok] })).toEqual([])
    expect(unpackKeptResults({ format: KEPT_RESULTS_FORMAT, version: 1, results: [ok, { id: 'c9', status: 'fine' }, null, { ...failed, index: '1' }] })).toEqual([ok])
  })
})
