/** Snapshots over the API: freeze, timeline, read, export, delete rules, restore, CSV of a series; nothing changes one. */
import { describe, expect, it } from 'vitest'
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { createHash } from 'node:crypto'
import { call, makeTestApp, seedLab, type SeededLab, type TestApp } from '../utils/server'
import { createSheet } from '../../server/services/sheets'
import { parseSheetFileText } from '../../shared/schema/sheet'
import { snapshotReply, snapshotSummarySchema, snapshotsReply } from '../../shared/schema/api'
import { canonicalJson } from '../../shared/snapshot/canonical'
import { freezeSnapshot, inProcessEvaluator } from '../../server/services/snapshots'
import type { Evaluator } from '../../server/services/evaluation'
import type { SheetRow } from '../../server/types'
import { ENGINE_VERSION } from '../../shared/engine/index'

const EXAMPLE = path.resolve(__dirname, '../../examples/edge-model.penumbra.json')

export async function labWithEdgeSheet(t: TestApp): Promise<{ lab: SeededLab; sheetId: string; sheet: SheetRow }> {
  const lab = await seedLab(t)
  const parsed = parseSheetFileText(readFileSync(EXAMPLE, 'utf8'))
  if (!parsed.ok) throw new Error('the example does not parse')
  const sheet = await createSheet(t.deps, lab.labId, lab.users.editor.id, parsed.value)
  return { lab, sheetId: sheet.id, sheet }
}

describe('POST /api/sheets/:sheetId/snapshots', () => {
  it('freezes the live sheet with its file, results, engine version and the sha256 of the canonical file', async () => {
    const t = await makeTestApp()
    const { lab, sheetId } = await labWithEdgeSheet(t)
    const res = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: 'after the 450 °C anneal' })
    expect(res.status).toBe(201)
    const summary = snapshotSummarySchema.parse(res.body)
    expect(summary).toMatchObject({ message: 'after the 450 °C anneal', createdBy: lab.users.editor.id, authorName: 'The editor', engineVersion: '1.0.0', reviewState: null })
    const detail = snapshotReply.parse((await call(t, lab.users.viewer.cookie).get(`/api/snapshots/${summary.id}`)).body)
    expect(createHash('sha256').update(canonicalJson(detail.file)).digest('hex')).toBe(summary.hash)
    expect(detail.results.cells.find((c) => c.name === 'lambda_g')).toMatchObject({ status: 'ok', unit: 'nm' })
    // the spectrum's numbers live in the datasets table; the snapshot's file carries them inline and stands alone
    const spectrum = detail.file.cells.find((c) => c.name === 'filmH17') as { datasetId?: string; columns: Record<string, { values: number[] }> }
    expect(spectrum.datasetId).toBeUndefined()
    expect(spectrum.columns.wavelength.values).toHaveLength(161)
    expect(detail.results.cells.find((c) => c.name === 'tauc_m')).toMatchObject({ status: 'ok' })
    await t.close()
  })

  it('answers 400 naming the field for an empty message', async () => {
    const t = await makeTestApp()
    const { lab, sheetId } = await labWithEdgeSheet(t)
    const res = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: ' ' })
    expect(res.status).toBe(400)
    expect(res.body.issues[0]).toMatchObject({ path: 'message' })
    await t.close()
  })
})

describe('freezeSnapshot(deps, sheet, userId, message, { evaluator })', () => {
  /** The in-process evaluator, counting the texts it is asked to evaluate. */
  function countingEvaluator(): Evaluator & { asked: string[] } {
    const asked: string[] = []
    return {
      asked,
      evaluate: (text, budgetMs) => inProcessEvaluator.evaluate(text, budgetMs),
      evaluateText: (text, budgetMs) => {
        asked.push(text)
        return inProcessEvaluator.evaluateText(text, budgetMs)
      },
    }
  }

  it('reuses the result computed for the same document state, and evaluates again after an edit, storing the same text either way', async () => {
    const t = await makeTestApp()
    const { lab, sheet } = await labWithEdgeSheet(t)
    const evaluator = countingEvaluator()
    const first = await freezeSnapshot(t.deps, sheet, lab.users.editor.id, 'first', { evaluator })
    const again = await freezeSnapshot(t.deps, sheet, lab.users.editor.id, 'again, unchanged', { evaluator })
    expect(evaluator.asked).toHaveLength(1)
    expect(again.hash).toBe(first.hash)
    expect(again.results).toBe(first.results)
    // the stored text is what a fresh evaluation of that file gives, bit for bit
    const fresh = await inProcessEvaluator.evaluateText(first.file, 10_000)
    expect(fresh.ok && fresh.text).toBe(first.results)
    expect(first.engineVersion).toBe(ENGINE_VERSION)
    const renamed = await freezeSnapshot(t.deps, { ...sheet, title: 'Film H-17, renamed' }, lab.users.editor.id, 'renamed', { evaluator })
    expect(evaluator.asked).toHaveLength(2)
    expect(renamed.hash).not.toBe(first.hash)
    // another evaluator keeps its own results
    const other = countingEvaluator()
    await freezeSnapshot(t.deps, sheet, lab.users.editor.id, 'other evaluator', { evaluator: other })
    expect(other.asked).toHaveLength(1)
    await t.close()
  })

  it('does not reuse a result in which a cell ran out of its time budget', async () => {
    const t = await makeTestApp()
    const { lab, sheet } = await labWithEdgeSheet(t)
    let calls = 0
    const slow: Evaluator = {
      evaluate: () => Promise.reject(new Error('not used')),
      evaluateText: async (text, budgetMs) => {
        calls++
        const outcome = await inProcessEvaluator.evaluateText(text, budgetMs)
        if (!outcome.ok) return outcome
        const results = JSON.parse(outcome.text) as { cells: { status: string; error?: string }[] }
        results.cells[0] = { ...results.cells[0], status: 'error', error: 'evaluation took longer than the 3 s budget for one cell and was stopped; use shorter grids' }
        return { ok: true, text: JSON.stringify(results) }
      },
    }
    await freezeSnapshot(t.deps, sheet, lab.users.editor.id, 'slow', { evaluator: slow })
    await freezeSnapshot(t.deps, sheet, lab.users.editor.id, 'slow again', { evaluator: slow })
    expect(calls).toBe(2)
    await t.close()
  })
})

describe('GET /api/sheets/:sheetId/snapshots', () => {
  it('lists the snapshots newest first', async () => {
    const t = await makeTestApp()
    const { lab, sheetId } = await labWithEdgeSheet(t)
    const first = await call(t, lab.users.editor.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: 'first' })
    const second = await call(t, lab.users.owner.cookie).post(`/api/sheets/${sheetId}/snapshots`, { message: 'second' })
    const list = snapshotsReply.parse((await call(t, lab.users.reviewer.cookie).get(`/api/sheets/${sheetId}/snapshots`)).body)
    expect(list.snapshots.map((s) => s.id)).toEqual([second.body.id, first.body.id])
    // the same document frozen twice has the same hash
    expect(second.body.hash).toBe(first.body.hash)
    await t.close()
  })
})
