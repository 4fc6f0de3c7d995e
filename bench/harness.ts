/**
 * Benchmark harness: medians of repeated runs, engine and baseline interleaved so both see the same machine load,
 * and one line per case: `bench <case>: <median> ms (<ratio>x hand-written)`.
 */

export interface Timing {
  medianMs: number
  samples: number[]
}

export interface MeasureOptions {
  /** Untimed runs first, to let the JIT settle. Default 5. */
  warmup?: number
  /** Timed runs at least. Default 21. */
  runs?: number
  /** Keep running until this much time was spent timing (bounded by 10× runs). Default 300 ms. */
  minTotalMs?: number
}

export function median(xs: readonly number[]): number {
  const s = [...xs].sort((a, b) => a - b)
  const m = s.length >> 1
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2
}

/** Times `fn` repeatedly and gives the median. */
export function measure(fn: () => unknown, options: MeasureOptions = {}): Timing {
  return measurePair(fn, undefined, options)[0]
}

/**
 * Times two functions alternately (a, b, a, b, …) so a burst of load on a shared machine hits both, and gives both
 * medians. `b` may be omitted.
 */
export function measurePair(a: () => unknown, b?: () => unknown, options: MeasureOptions = {}): [Timing, Timing] {
  const warmup = options.warmup ?? 5
  const runs = options.runs ?? 21
  const minTotal = options.minTotalMs ?? 300
  for (let i = 0; i < warmup; i++) {
    a()
    b?.()
  }
  const ta: number[] = []
  const tb: number[] = []
  let spent = 0
  while (ta.length < runs || (spent < minTotal && ta.length < runs * 10)) {
    let t = performance.now()
    a()
    const da = performance.now() - t
    ta.push(da)
    spent += da
    if (b) {
      t = performance.now()
      b()
      const db = performance.now() - t
      tb.push(db)
      spent += db
    }
  }
  return [
    { medianMs: median(ta), samples: ta },
    { medianMs: tb.length ? median(tb) : NaN, samples: tb },
  ]
}

function formatMs(ms: number): string {
  return ms >= 100 ? ms.toFixed(0) : ms >= 10 ? ms.toFixed(1) : ms >= 1 ? ms.toFixed(2) : ms.toFixed(3)
}

/**
 * Prints `bench <case>: <median> ms (<ratio>x hand-written)`; the ratio part only when given. `baseline` names what
 * the ratio is against when it is not a hand-written loop (a bare relay, say).
 */
export function printBench(caseName: string, medianMs: number, ratio?: number, baseline = 'hand-written'): void {
  const tail = ratio === undefined || !Number.isFinite(ratio) ? '' : ` (${ratio.toFixed(2)}x ${baseline})`
  console.log(`bench ${caseName}: ${formatMs(medianMs)} ms${tail}`)
}

/** Prints whether a target was met, under the case's line. */
export function printTarget(what: string, met: boolean): void {
  console.log(`  target ${what}: ${met ? 'met' : 'NOT met'}`)
}
