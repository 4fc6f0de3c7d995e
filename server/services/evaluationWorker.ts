/**
 * The body of an evaluation worker thread (started through evaluation.worker.mjs): parses a sheet file's text with
 * the shared schema and evaluates it with the shared engine — exactly what the command-line evaluator does — and
 * answers with the result's JSON text, or the file's problems by JSON path.
 */
import { parentPort } from 'node:worker_threads'
import { evaluateSheet } from '../../shared/engine/index'
import { parseSheetFileText } from '../../shared/schema/sheet'
import type { WorkerReply, WorkerRequest } from './evaluation'

if (!parentPort) throw new Error('evaluationWorker.ts runs only as a worker thread')
const port = parentPort

const encoder = new TextEncoder()

port.on('message', (request: WorkerRequest) => {
  let reply: WorkerReply
  try {
    const parsed = parseSheetFileText(request.text)
    if (parsed.ok) {
      const json = JSON.stringify(evaluateSheet(parsed.value))
      if (request.as === 'text') {
        port.postMessage({ id: request.id, kind: 'text', text: json } satisfies WorkerReply)
        return
      }
      // encoded here and handed over without a copy, so the main thread does no work proportional to the result
      const bytes = encoder.encode(json)
      port.postMessage({ id: request.id, kind: 'result', bytes } satisfies WorkerReply, [bytes.buffer])
      return
    }
    reply = { id: request.id, kind: 'invalid', issues: parsed.issues }
  } catch (err) {
    // the engine turns every cell failure into a value; this is a bug or a resource limit
    reply = { id: request.id, kind: 'failed', message: err instanceof Error ? err.message : String(err) }
  }
  port.postMessage(reply)
})

port.postMessage({ id: 0, kind: 'ready' } satisfies WorkerReply)
