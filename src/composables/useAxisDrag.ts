/**
 * Dragging across a drawn plotly figure to choose an interval of its (linear) x axis — the fit window of a Tauc or
 * Urbach plot. Works on the plot that a PlotView draws inside `root`, without changing how it is drawn: a pointer
 * pressed inside the plot area is taken before plotly's own zoom sees it, and its horizontal travel is converted to x
 * values with the axis's range and pixel extent.
 *
 * Also reports the plot area's geometry after each drawing, so companions (a residual strip) can line up with it.
 */
import { onScopeDispose, ref, watch, type Ref } from 'vue'

export interface PlotArea {
  /** Left edge and width of the plot area in pixels, from the left of `root`. */
  left: number
  width: number
  /** The x axis range shown, in data units, left to right. */
  range: [number, number]
}

interface Axis {
  _offset: number
  _length: number
  range: [number, number]
}
interface PlotlyDiv extends HTMLElement {
  _fullLayout?: { xaxis?: Axis; yaxis?: Axis }
}

export interface AxisDragOptions {
  enabled: () => boolean
  /** While dragging: the interval so far, low to high. */
  onMove: (lo: number, hi: number) => void
  /** On release after a real drag (at least a few pixels). */
  onDone: (lo: number, hi: number) => void
  /** Pressed and released without moving, or the drag was lost. */
  onCancel: () => void
}

const MIN_PIXELS = 4

export function useAxisDrag(root: Ref<HTMLElement | null | undefined>, opts: AxisDragOptions) {
  const area = ref<PlotArea | null>(null)
  const dragging = ref(false)
  let startX = 0
  let startPx = 0
  let last: [number, number] | null = null

  function plot(): PlotlyDiv | null {
    return (root.value?.querySelector('.js-plotly-plot') as PlotlyDiv | null) ?? null
  }

  function measure(): void {
    const gd = plot()
    const xa = gd?._fullLayout?.xaxis
    if (!gd || !xa || !root.value) return
    const shift = gd.getBoundingClientRect().left - root.value.getBoundingClientRect().left
    const next: PlotArea = { left: shift + xa._offset, width: xa._length, range: [xa.range[0], xa.range[1]] }
    const now = area.value
    // only a real change is reported: what is drawn from it changes elements inside root, which calls this again
    if (now && now.left === next.left && now.width === next.width && now.range[0] === next.range[0] && now.range[1] === next.range[1]) return
    area.value = next
  }

  /**
   * Plotly changes the figure's elements on every drawing (and replaces them after a purge): any change inside `root`
   * schedules one measurement in the next frame.
   */
  let frame = 0
  const observer =
    typeof MutationObserver === 'undefined'
      ? null
      : new MutationObserver(() => {
          if (frame) return
          frame = requestAnimationFrame(() => {
            frame = 0
            measure()
          })
        })

  function xAt(clientX: number): number | null {
    const gd = plot()
    const xa = gd?._fullLayout?.xaxis
    if (!gd || !xa || !(xa._length > 0)) return null
    const px = clientX - gd.getBoundingClientRect().left - xa._offset
    const clamped = Math.max(0, Math.min(xa._length, px))
    return xa.range[0] + (clamped / xa._length) * (xa.range[1] - xa.range[0])
  }

  function insidePlotArea(e: MouseEvent): boolean {
    const gd = plot()
    const fl = gd?._fullLayout
    if (!gd || !fl?.xaxis || !fl.yaxis) return false
    const rect = gd.getBoundingClientRect()
    const px = e.clientX - rect.left - fl.xaxis._offset
    const py = e.clientY - rect.top - fl.yaxis._offset
    return px >= 0 && px <= fl.xaxis._length && py >= 0 && py <= fl.yaxis._length
  }

  function onPointerDown(e: PointerEvent): void {
    if (e.button !== 0 || !opts.enabled() || !insidePlotArea(e)) return
    const x = xAt(e.clientX)
    if (x === null) return
    // taken before plotly: a cancelled pointerdown also suppresses the mouse events plotly's zoom listens to
    e.preventDefault()
    e.stopPropagation()
    dragging.value = true
    startX = x
    startPx = e.clientX
    last = null
    window.addEventListener('pointermove', onPointerMove)
    window.addEventListener('pointerup', onPointerUp)
    window.addEventListener('pointercancel', onPointerCancel)
  }

  function onPointerMove(e: PointerEvent): void {
    if (!dragging.value) return
    if (Math.abs(e.clientX - startPx) < MIN_PIXELS && !last) return
    const x = xAt(e.clientX)
    if (x === null) return
    last = [Math.min(startX, x), Math.max(startX, x)]
    opts.onMove(last[0], last[1])
  }

  function stop(): void {
    dragging.value = false
    window.removeEventListener('pointermove', onPointerMove)
    window.removeEventListener('pointerup', onPointerUp)
    window.removeEventListener('pointercancel', onPointerCancel)
  }

  function onPointerUp(e: PointerEvent): void {
    if (!dragging.value) return
    onPointerMove(e)
    stop()
    if (last && last[1] > last[0]) opts.onDone(last[0], last[1])
    else opts.onCancel()
  }

  function onPointerCancel(): void {
    stop()
    opts.onCancel()
  }

  /** Plotly's zoom starts on mousedown and touchstart inside the plot area: not while a window can be dragged. */
  function swallow(e: MouseEvent | TouchEvent): void {
    const point = 'touches' in e ? e.touches[0] : e
    if (opts.enabled() && point && insidePlotArea(point as MouseEvent)) e.stopPropagation()
  }

  watch(
    root,
    (el, old) => {
      if (old) {
        old.removeEventListener('pointerdown', onPointerDown, true)
        old.removeEventListener('mousedown', swallow, true)
        old.removeEventListener('touchstart', swallow, true)
      }
      observer?.disconnect()
      if (!el) return
      el.addEventListener('pointerdown', onPointerDown, true)
      el.addEventListener('mousedown', swallow, true)
      el.addEventListener('touchstart', swallow, true)
      observer?.observe(el, { subtree: true, childList: true })
      measure()
    },
    { immediate: true, flush: 'post' },
  )

  onScopeDispose(() => {
    stop()
    cancelAnimationFrame(frame)
    observer?.disconnect()
    const el = root.value
    if (el) {
      el.removeEventListener('pointerdown', onPointerDown, true)
      el.removeEventListener('mousedown', swallow, true)
      el.removeEventListener('touchstart', swallow, true)
    }
  })

  return { area, dragging }
}
