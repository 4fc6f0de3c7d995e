/**
 * Draws a figure with plotly.js into an element. The library (a 4.6 MB chunk, over a second of script on a small
 * machine) is loaded with a dynamic import only when a figure comes near the viewport (IntersectionObserver) and
 * only after the page has painted, so it never holds back the first cards; it is shared by every figure on the
 * page. Later changes of the figure go through `Plotly.react`, which only redraws what changed. Follows the
 * element's size, and purges the plot when the owning scope ends.
 *
 * Plotly's own floating toolbar is off everywhere (`displayModeBar: false`): each figure carries Penumbra's own
 * (FigureToolbar.vue), which calls `resetView` and the exports here.
 *
 * Returns `state` ('loading' | 'ready' | 'error'), `error` (a plain sentence), `resetView`, and image export.
 */
import { onScopeDispose, ref, shallowRef, watch, type Ref } from 'vue'
import type { Config, Data, Layout } from 'plotly.js-dist-min'
import { mark } from '@/lib/marks'

type PlotlyModule = typeof import('plotly.js-dist-min').default

export interface PlotSpec {
  data: Data[]
  layout: Partial<Layout>
  config?: Partial<Config>
}

export type PlotState = 'loading' | 'ready' | 'error'

export interface ExportOptions {
  width?: number
  height?: number
  /** A figure to write instead of the one on screen (e.g. with the title drawn and export fonts). */
  spec?: PlotSpec
  /** Layout fields overriding the on-screen (or given) figure's layout in the file. */
  layout?: Partial<Layout>
}

let loading: Promise<PlotlyModule> | null = null

/** The plotly module, loaded once per page. */
export function loadPlotly(): Promise<PlotlyModule> {
  if (!loading) {
    loading = import('plotly.js-dist-min').then((m) => ((m as { default?: PlotlyModule }).default ?? (m as unknown as PlotlyModule)))
    loading.catch(() => {
      loading = null // a failed chunk load can be retried on the next figure
    })
  }
  return loading
}

/** How far outside the viewport a figure starts loading the library and drawing (scrolling gets there first). */
export const PLOT_NEAR_VIEWPORT = '600px 0px'

/**
 * Resolves after the page has painted what it has (two animation frames) and the main thread had a quiet moment, so
 * the cards of a sheet paint before the charting library's script runs. Shared by every figure.
 */
let painted: Promise<void> | null = null
export function afterFirstPaint(): Promise<void> {
  if (typeof window === 'undefined' || typeof requestAnimationFrame === 'undefined') return Promise.resolve()
  painted ??= new Promise<void>((resolve) => {
    requestAnimationFrame(() =>
      requestAnimationFrame(() => {
        const idle = (window as { requestIdleCallback?: (cb: () => void, o?: { timeout: number }) => number }).requestIdleCallback
        if (idle) idle(() => resolve(), { timeout: 400 })
        else setTimeout(resolve, 0)
      }),
    )
  })
  return painted
}

/** Resolves once `el` is within PLOT_NEAR_VIEWPORT of the viewport (at once where IntersectionObserver is missing). */
function whenNear(el: HTMLElement, onDispose: (stop: () => void) => void): Promise<void> {
  if (typeof IntersectionObserver === 'undefined') return Promise.resolve()
  return new Promise<void>((resolve) => {
    const io = new IntersectionObserver(
      (entries) => {
        if (entries.some((e) => e.isIntersecting)) {
          io.disconnect()
          resolve()
        }
      },
      { rootMargin: PLOT_NEAR_VIEWPORT },
    )
    io.observe(el)
    onDispose(() => io.disconnect())
  })
}

const BASE_CONFIG: Partial<Config> = {
  displaylogo: false,
  displayModeBar: false,
  responsive: false, // we follow the element with our own ResizeObserver
}

/** A deep copy of plain data (objects, arrays, primitives), e.g. a plotly layout. */
function copyPlain<T>(value: T): T {
  if (Array.isArray(value)) return value.map(copyPlain) as T
  if (value && typeof value === 'object') return Object.fromEntries(Object.entries(value).map(([k, v]) => [k, copyPlain(v)])) as T
  return value
}

function message(err: unknown): string {
  const text = err instanceof Error ? err.message : String(err)
  return text.replace(/[.\s]+$/, '')
}

/**
 * `eager`: draw as soon as the page has painted, wherever the figure is (a page made to be printed, whose figures
 * must all be drawn before the print dialog takes its picture).
 */
export function usePlot(target: Ref<HTMLElement | null | undefined>, spec: Ref<PlotSpec | null>, options: { eager?: boolean } = {}) {
  const state = ref<PlotState>('loading')
  const error = ref<string | null>(null)
  const plotly = shallowRef<PlotlyModule | null>(null)
  /** The element's width as last observed; a change redraws. */
  const width = ref(0)
  let disposed = false
  let drawn: HTMLElement | null = null
  let drawnWidth: number | undefined
  let observer: ResizeObserver | null = null
  let frame = 0
  let rendering: Promise<void> = Promise.resolve()

  let stopWatching: (() => void) | null = null
  let asked = false
  /**
   * Loads the library (and so draws) once the figure's element is near the viewport and the page has painted. A
   * figure far down the sheet stays undrawn until it is scrolled near, even when another figure loaded the library.
   */
  const stopTarget = watch(
    target,
    (el) => {
      if (asked) return
      stopWatching?.()
      stopWatching = null
      if (!el) return
      const near = options.eager ? Promise.resolve() : whenNear(el, (stop) => (stopWatching = stop))
      void near.then(() => {
        if (asked || disposed) return
        asked = true
        afterFirstPaint()
          .then(() => (disposed ? null : loadPlotly()))
          .then(
            (m) => {
              if (disposed || !m) return
              mark('pn:plotly-ready')
              plotly.value = m
            },
            (err) => {
              if (disposed) return
              state.value = 'error'
              error.value = `The charting library could not be loaded (${message(err)}). Reload the page to try again.`
            },
          )
      })
    },
    { immediate: true, flush: 'post' },
  )

  function observe(el: HTMLElement) {
    observer?.disconnect()
    if (typeof ResizeObserver === 'undefined') return
    observer = new ResizeObserver(() => {
      cancelAnimationFrame(frame)
      frame = requestAnimationFrame(() => {
        // a full redraw at the new width (not Plots.resize), so margins grown for a wrapped legend shrink back
        if (drawn && drawn.isConnected && drawn.clientWidth > 0) width.value = Math.round(drawn.clientWidth)
      })
    })
    observer.observe(el)
  }

  /** One drawing of the current element and spec. */
  async function drawOnce(): Promise<void> {
    const P = plotly.value
    const el = target.value
    const s = spec.value
    if (!P || !el || !s || disposed) return
    try {
      if (drawn && drawn !== el) {
        P.purge(drawn)
        drawn = null
      }
      const w = el.clientWidth > 0 ? Math.round(el.clientWidth) : undefined
      // After a width change plotly keeps margins it grew for a wrapped legend and misplaces the legend; a drawing
      // from scratch is right, and widths change rarely.
      if (drawn === el && w !== drawnWidth) P.purge(el)
      drawnWidth = w
      // plotly writes zoom and pan into the layout it is given (axis ranges): a copy keeps the figure's own for a reset
      const layout = copyPlain(s.layout)
      await P.react(el, s.data, w ? { ...layout, width: w } : layout, { ...BASE_CONFIG, ...s.config })
      if (drawn !== el) observe(el)
      drawn = el
      mark('pn:first-figure')
      state.value = 'ready'
      error.value = null
    } catch (err) {
      state.value = 'error'
      error.value = `This figure could not be drawn: ${message(err)}.`
    }
  }

  // Changes that arrive while a drawing is under way (a slider being dragged) collapse into one more drawing of the
  // latest figure, instead of a queue of stale ones.
  let busy = false
  let dirty = false
  function render(): void {
    if (busy) {
      dirty = true
      return
    }
    busy = true
    rendering = (async () => {
      try {
        do {
          dirty = false
          await drawOnce()
        } while (dirty && !disposed)
      } finally {
        busy = false
      }
    })()
  }

  watch([plotly, target, spec, width], render, { flush: 'post' })

  /** Draws the figure afresh, dropping any zoom or pan made on it. */
  function resetView(): void {
    const P = plotly.value
    if (P && drawn) {
      P.purge(drawn)
      drawn = null
    }
    render()
  }

  async function ready(): Promise<{ P: PlotlyModule; el: HTMLElement }> {
    await rendering
    const P = plotly.value
    if (!P || !drawn) throw new Error('the figure is not drawn yet')
    return { P, el: drawn }
  }

  function exportFigure(size?: ExportOptions): { data: Data[]; layout: Partial<Layout>; config: Partial<Config> } | null {
    const s = size?.spec ?? spec.value
    const el = drawn
    if (!s || !el) return null
    const width = size?.width ?? Math.max(480, el.clientWidth)
    const height = size?.height ?? Math.max(320, el.clientHeight)
    return { data: s.data, layout: { ...s.layout, ...size?.layout, width, height }, config: { ...BASE_CONFIG, ...s.config, staticPlot: true } }
  }

  /** The figure as a data URL (PNG or SVG), e.g. for a report. */
  async function toImage(format: 'png' | 'svg', size?: ExportOptions): Promise<string> {
    await ready()
    const P = plotly.value!
    const figure = exportFigure(size)
    if (!figure) throw new Error('the figure is not drawn yet')
    return P.toImage(figure, { format, width: figure.layout.width, height: figure.layout.height, scale: format === 'png' ? 2 : 1 })
  }

  onScopeDispose(() => {
    disposed = true
    stopTarget()
    stopWatching?.()
    cancelAnimationFrame(frame)
    observer?.disconnect()
    observer = null
    if (drawn && plotly.value) plotly.value.purge(drawn)
    drawn = null
  })

  return { state, error, resetView, toImage, plotly }
}
