/**
 * snapshot-freeze: freezing a demo sheet on the server, as POST /api/sheets/:sheetId/snapshots does it — load the
 * stored document, export its canonical sheet file, evaluate it on the (warm) evaluation worker, hash it and store
 * the row. Baseline in the same run: the engine alone evaluating the same file on the main thread, so the ratio is
 * what freezing costs on top of the evaluation itself. Target: ≤ 100 ms for every demo sheet.
 */
import { evaluateSheet } from '../../shared/engine/index'
import { parseSheetFileText } from '../../shared/schema/sheet'
import { openDb } from '../../server/db/client'
import { labs, memberships, users } from '../../server/db/schema'
import { defaultConfig } from '../../server/config'
import { EXAMPLES_DIR, readExamples } from '../../server/db/seed'
import { createSheet } from '../../server/services/sheets'
import { freezeSnapshot } from '../../server/services/snapshots'
import { closeSharedEvaluator, sharedEvaluator } from '../../server/services/evaluation'
import { canonicalJson } from '../../shared/snapshot/canonical'
import { loadSheetFile } from '../../server/services/documents'
import { median, printBench, printTarget } from '../harness'

const TARGET_MS = 100
const WARMUP = 3
const RUNS = 15

export default async function snapshotFreeze(): Promise<void> {
  const handle = openDb(':memory:')
  const { db } = handle
  const now = Date.now()
  db.insert(users).values({ id: 'u1', email: 'tomas@halvorsen-lab.example', name: 'Tomás Reyes', passwordHash: 'x', createdAt: now }).run()
  db.insert(labs).values({ id: 'lab', name: 'Halvorsen Thin-Film Lab', createdBy: 'u1', createdAt: now }).run()
  db.insert(memberships).values({ labId: 'lab', userId: 'u1', role: 'editor', createdAt: now }).run()
  const config = defaultConfig()
  const evaluator = sharedEvaluator()
  let worst = 0
  try {
    for (const example of readExamples(EXAMPLES_DIR, (m) => console.warn(m))) {
      const sheet = createSheet({ db }, 'lab', 'u1', example.sheet)
      const text = canonicalJson(loadSheetFile(db, sheet.id, sheet.title))
      const parsed = parseSheetFileText(text)
      if (!parsed.ok) throw new Error(`${example.file} does not parse`)
      const freezeTimes: number[] = []
      const engineTimes: number[] = []
      for (let i = 0; i < WARMUP + RUNS; i++) {
        let t = performance.now()
        await freezeSnapshot({ db, config }, sheet, 'u1', `bench ${i}`, { evaluator })
        const tf = performance.now() - t
        t = performance.now()
        JSON.stringify(evaluateSheet(parsed.value))
        const te = performance.now() - t
        if (i >= WARMUP) {
          freezeTimes.push(tf)
          engineTimes.push(te)
        }
      }
      const m = median(freezeTimes)
      worst = Math.max(worst, m)
      printBench(`snapshot-freeze ${example.file.replace('.penumbra.json', '')}`, m, m / median(engineTimes), 'the engine alone')
    }
    printTarget(`freeze ≤ ${TARGET_MS} ms for every demo sheet`, worst <= TARGET_MS)
  } finally {
    closeSharedEvaluator()
    handle.close()
  }
}
