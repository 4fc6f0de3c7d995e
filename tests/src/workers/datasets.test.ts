import { describe, expect, it } from 'vitest'
import { SheetEngine } from '../../../shared/engine'
import type { SheetCell } from '../../../shared/schema/sheet'
import { DatasetFiller } from '../../../src/workers/datasets'
import { EngineMirror } from '../../../src/workers/mirror'
import type { StoredColumn } from '../../../shared/import/spectrumCell'

// a live-document spectrum cell: metadata only, the numbers in dataset ds_1 (invented values)
const CELLS: SheetCell[] = [
  { id: 's', kind: 'spectrum', name: 'filmB', datasetId: 'ds_1', columns: { wavelength: { unit: 'nm', quantity: 'wavelength', count: 2 }, T: { unit: '%', quantity: 'T', count: 2 } } },
  { id: 'f', kind: 'formula', name: 'Tmax', source: 'max(filmB.T)' },
]
const COLUMNS: StoredColumn[] = [
  { name: 'wavelength', quantity: 'wavelength', unit: 'nm', values: [400, 410] },
  { name: 'T', quantity: 'T', unit: '%', values: [80, 82] },
]

function deferred<T>() {
  let resolve!: (v: T) => void
  let reject!: (e: unknown) => void
  const promise = new Promise<T>((a, b) => ((resolve = a), (reject = b)))
  return { promise, resolve, reject }
}

describe('DatasetFiller', () => {
  it('fill() hands a waiting cell over unfilled, fetches its dataset once, then re-evaluates it and its dependents', async () => {
    const engine = new SheetEngine()
    const wait = deferred<StoredColumn[]>()
    const fetched: string[] = []
    const loaded: string[][] = []
    const filler = new DatasetFiller(engine, (id) => (fetched.push(id), wait.promise), (ids) => loaded.push(ids))
    const first = engine.load(CELLS.map((c) => filler.fill(c)))
    expect(first.cells[0].status).toBe('error')
    expect(filler.pendingMessage('ds_1')).toBe('loading the measured data…')
    expect(first.cells[1].status).toBe('blocked')
    filler.fill(CELLS[0])
    expect(fetched).toEqual(['ds_1'])
    wait.resolve(COLUMNS)
    await wait.promise
    await Promise.resolve()
    expect(loaded).toEqual([['s', 'f']])
    expect(engine.resultOf('f')?.status).toBe('ok')
    expect(engine.resultOf('f')?.value).toBeCloseTo(0.82, 12) // 82 % as a fraction
  })

  it('an edit through the mirror after the data arrived reaches the engine filled', async () => {
    const engine = new SheetEngine()
    const filler = new DatasetFiller(engine, async () => COLUMNS, () => {})
    engine.load(CELLS.map((c) => filler.fill(c)))
    await new Promise((r) => setTimeout(r, 0))
    const mirror = new EngineMirror(filler)
    mirror.reset(CELLS)
    const renamed = { ...CELLS[1], source: 'min(filmB.T)' } as SheetCell
    mirror.apply(['s', 'f'], [renamed])
    expect(engine.resultOf('f')?.value).toBeCloseTo(0.8, 12)
  })

  it('pendingMessage() says why a dataset could not be loaded', async () => {
    const engine = new SheetEngine()
    const filler = new DatasetFiller(engine, async () => { throw new Error('No such dataset, or you are not a member of its lab.') }, () => {})
    engine.load(CELLS.map((c) => filler.fill(c)))
    await new Promise((r) => setTimeout(r, 0))
    expect(filler.pendingMessage('ds_1')).toBe('the measured data (dataset ds_1) could not be loaded: No such dataset, or you are not a member of its lab.')
  })
})
