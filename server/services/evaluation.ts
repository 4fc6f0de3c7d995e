/**
 * Server-side evaluation of sheet files (POST /api/evaluate) off the main thread: a small pool of worker threads runs
 * the shared engine, so a large or slow sheet never holds up other requests or the live collaboration traffic.
 * Each evaluation has a whole-sheet wall-clock budget (on top of the engine's own budget per cell): a worker that
 * goes over it is terminated and replaced. A bounded queue answers "busy" rather than piling work up.
 */
import { Worker } from 'node:worker_threads'
import type { SchemaIssue } from '../../shared/schema/sheet'

/**
 * How the result's JSON comes back: UTF-8 bytes handed over without a copy (POST /api/evaluate writes them to the
 * socket as they are), or the string itself (a snapshot stores the text: structured cloning a string is a copy of
 * its characters, cheaper than encoding in the worker and decoding again here).
 */
export type ResultForm = 'bytes' | 'text'

export interface WorkerRequest {
  id: number
  text: string
  as: ResultForm
}

export type WorkerReply =
  | { id: number; kind: 'ready' }
  /** The result object's JSON, UTF-8, exactly as the command-line evaluator prints it (without its newline). */
  | { id: number; kind: 'result'; bytes: Uint8Array }
  /** The same JSON as a string, when the request asked for text. */
  | { id: number; kind: 'text'; text: string }
  | { id: number; kind: 'invalid'; issues: SchemaIssue[] }
  | { id: number; kind: 'failed'; message: string }

export type EvaluationFailure =
  | { ok: false; reason: 'invalid'; issues: SchemaIssue[] }
  /** The whole sheet took longer than its budget. */
  | { ok: false; reason: 'timeout'; budgetMs: number }
  /** The evaluation needed more memory than a worker may use. */
  | { ok: false; reason: 'memory' }
  /** Every worker is taken and the queue is full (or the wait was too long). */
  | { ok: false; reason: 'busy' }
  | { ok: false; reason: 'failed'; message: string }

export type EvaluationOutcome = { ok: true; json: Uint8Array } | EvaluationFailure
export type TextEvaluationOutcome = { ok: true; text: string } | EvaluationFailure
/** What a job resolves with: the reply in the form it asked for. */
type JobOutcome = { ok: true; json: Uint8Array } | { ok: true; text: string } | EvaluationFailure

export interface EvaluatorOptions {
  /** Worker threads evaluating at once. */
  workers: number
  /** Evaluations allowed to wait for a free worker; more answer busy. */
  maxQueue: number
  /** An idle worker is stopped after this long (it takes about a second to start one). */
  idleMs: number
  /** Heap limit of one worker, MB (a sheet that needs more fails alone). */
  maxHeapMb: number
}

export const DEFAULT_EVALUATOR_OPTIONS: EvaluatorOptions = { workers: 1, maxQueue: 8, idleMs: 5 * 60_000, maxHeapMb: 1024 }

const WORKER_ENTRY = new URL('./evaluation.worker.mjs', import.meta.url)

interface Job {
  id: number
  text: string
  as: ResultForm
  budgetMs: number
  queuedAt: number
  resolve(outcome: JobOutcome): void
}

/** One worker thread and the job it is running. */
class Slot {
  private worker: Worker | null = null
  private ready: Promise<void> | null = null
  private job: Job | null = null
  private budgetTimer: NodeJS.Timeout | null = null
  private idleTimer: NodeJS.Timeout | null = null

  constructor(
    private readonly options: EvaluatorOptions,
    private readonly onFree: () => void,
  ) {}

  get busy(): boolean {
    return this.job !== null
  }

  run(job: Job): void {
    this.job = job
    if (this.idleTimer) clearTimeout(this.idleTimer)
    this.idleTimer = null
    this.start().then(
      () => {
        if (this.job !== job || !this.worker) return
        this.budgetTimer = setTimeout(() => {
          // stopped first, so the next job gets a fresh thread rather than this busy one
          this.stop()
          this.finish(job, { ok: false, reason: 'timeout', budgetMs: job.budgetMs })
        }, job.budgetMs)
        this.budgetTimer.unref()
        this.worker.postMessage({ id: job.id, text: job.text, as: job.as } satisfies WorkerRequest)
      },
      (err: Error) => this.finish(job, { ok: false, reason: 'failed', message: `the evaluation worker did not start: ${err.message}` }),
    )
  }

  /** Stops the thread for good; a job it was running answers busy. */
  close(): void {
    if (this.idleTimer) clearTimeout(this.idleTimer)
    this.stop()
    if (this.job) this.finish(this.job, { ok: false, reason: 'busy' })
  }

  /** Stops the thread (a new one starts for the next job). */
  stop(): void {
    const worker = this.worker
    this.worker = null
    this.ready = null
    if (worker) void worker.terminate()
  }

  private start(): Promise<void> {
    if (this.ready) return this.ready
    const worker = new Worker(WORKER_ENTRY, { resourceLimits: { maxOldGenerationSizeMb: this.options.maxHeapMb } })
    worker.unref()
    this.worker = worker
    this.ready = new Promise<void>((resolve, reject) => {
      worker.on('message', (reply: WorkerReply) => {
        if (reply.kind === 'ready') return resolve()
        const job = this.job
        if (!job || reply.id !== job.id) return
        if (reply.kind === 'result') this.finish(job, { ok: true, json: reply.bytes })
        else if (reply.kind === 'text') this.finish(job, { ok: true, text: reply.text })
        else if (reply.kind === 'invalid') this.finish(job, { ok: false, reason: 'invalid', issues: reply.issues })
        else this.finish(job, { ok: false, reason: 'failed', message: reply.message })
      })
      worker.on('error', (err: Error & { code?: string }) => {
        reject(err)
        this.lost(worker, err.code === 'ERR_WORKER_OUT_OF_MEMORY' ? { ok: false, reason: 'memory' } : { ok: false, reason: 'failed', message: err.message })
      })
      worker.on('exit', (code) => {
        reject(new Error(`the worker exited with code ${code}`))
        this.lost(worker, { ok: false, reason: 'failed', message: `the evaluation worker stopped (exit code ${code})` })
      })
    })
    this.ready.catch(() => {}) // the job that waits on it handles the failure
    return this.ready
  }

  /** The thread died on its own: forget it first (the next job starts a new one), then fail the job it had. */
  private lost(worker: Worker, outcome: EvaluationFailure): void {
    if (this.worker !== worker) return
    this.worker = null
    this.ready = null
    if (this.job) this.finish(this.job, outcome)
  }

  private finish(job: Job, outcome: JobOutcome): void {
    if (this.job !== job) return
    this.job = null
    if (this.budgetTimer) clearTimeout(this.budgetTimer)
    this.budgetTimer = null
    job.resolve(outcome)
    if (this.worker) {
      this.idleTimer = setTimeout(() => this.stop(), this.options.idleMs)
      this.idleTimer.unref()
    }
    this.onFree()
  }
}

/** What freezing and comparing need of an evaluator. */
export interface Evaluator {
  /** The result as UTF-8 bytes (to send as they are). */
  evaluate(text: string, budgetMs: number): Promise<EvaluationOutcome>
  /** The result as a string (to store or parse). */
  evaluateText(text: string, budgetMs: number): Promise<TextEvaluationOutcome>
}

export class SheetEvaluator implements Evaluator {
  private readonly slots: Slot[]
  private readonly queue: Job[] = []
  private nextId = 1
  private closed = false

  constructor(private readonly options: EvaluatorOptions = DEFAULT_EVALUATOR_OPTIONS) {
    this.slots = Array.from({ length: Math.max(1, options.workers) }, () => new Slot(options, () => this.dispatch()))
  }

  /** Parses and evaluates a sheet file's text; never rejects. */
  evaluate(text: string, budgetMs: number): Promise<EvaluationOutcome> {
    return this.enqueue(text, budgetMs, 'bytes') as Promise<EvaluationOutcome>
  }

  /** The same, with the result's JSON as a string. */
  evaluateText(text: string, budgetMs: number): Promise<TextEvaluationOutcome> {
    return this.enqueue(text, budgetMs, 'text') as Promise<TextEvaluationOutcome>
  }

  private enqueue(text: string, budgetMs: number, as: ResultForm): Promise<JobOutcome> {
    if (this.closed) return Promise.resolve({ ok: false, reason: 'busy' })
    const waiting = this.queue.length + this.slots.filter((s) => s.busy).length - this.slots.length
    if (waiting >= this.options.maxQueue) return Promise.resolve({ ok: false, reason: 'busy' })
    return new Promise((resolve) => {
      this.queue.push({ id: this.nextId++, text, as, budgetMs, queuedAt: Date.now(), resolve })
      this.dispatch()
    })
  }

  /** Stops every worker; queued evaluations answer busy. */
  close(): void {
    this.closed = true
    for (const job of this.queue.splice(0)) job.resolve({ ok: false, reason: 'busy' })
    for (const slot of this.slots) slot.close()
  }

  private dispatch(): void {
    const now = Date.now()
    while (this.queue.length > 0) {
      const job = this.queue[0]
      // a job that waited longer than two of its budgets answers busy rather than keep its caller hanging
      if (now - job.queuedAt > 2 * job.budgetMs) {
        this.queue.shift()
        job.resolve({ ok: false, reason: 'busy' })
        continue
      }
      const free = this.slots.find((s) => !s.busy)
      if (!free) return
      this.queue.shift()
      free.run(job)
    }
  }
}

let shared: SheetEvaluator | null = null

/** The process's evaluator (created on first use; its threads never keep the process alive). */
export function sharedEvaluator(): SheetEvaluator {
  shared ??= new SheetEvaluator()
  return shared
}

/** Stops the process's evaluator threads (at shutdown). */
export function closeSharedEvaluator(): void {
  shared?.close()
  shared = null
}
