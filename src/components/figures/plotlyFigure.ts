/**
 * Maps a figure's drawing model (shared/plot) onto plotly traces and layout in Penumbra's look: paper plot area,
 * a night-blue frame, the warm accent for band-gap marks and fitted lines, Fira Sans text and Fira Mono numbers.
 */
import type { Annotation, Data, Layout, Shape } from 'plotly.js-dist-min'
import type { PlotSpec } from '@/composables/usePlot'
import type { FigureModel } from '../../../shared/plot/figure'
import { rampColor, rampScale } from '../../../shared/plot/palette'
import { formatNumber } from '../../../shared/plot/format'
import { prettyUnit } from '../../../shared/plot/units'

export interface Theme {
  paper: string
  surface: string
  night: string
  accent: string
  accentInk: string
  ink: string
  muted: string
  line: string
  fontSans: string
  fontMono: string
}

/** Fallbacks equal to the shell's theme.css, for exports and tests without the stylesheet. */
export const DEFAULT_THEME: Theme = {
  paper: '#f6f3ec',
  surface: '#fffdf9',
  night: '#15223f',
  accent: '#d2702a',
  accentInk: '#a9521a',
  ink: '#1c2331',
  muted: '#5b6474',
  line: '#e2ddd2',
  fontSans: "'Fira Sans', system-ui, sans-serif",
  fontMono: "'Fira Mono', ui-monospace, monospace",
}

/** The `--pn-*` theme variables as seen from an element (plotly needs concrete colours, not CSS variables). */
export function readTheme(el?: Element | null): Theme {
  if (!el || typeof getComputedStyle === 'undefined') return DEFAULT_THEME
  const css = getComputedStyle(el)
  const get = (name: string, fallback: string) => css.getPropertyValue(name).trim() || fallback
  return {
    paper: get('--pn-paper', DEFAULT_THEME.paper),
    surface: get('--pn-surface', DEFAULT_THEME.surface),
    night: get('--pn-night', DEFAULT_THEME.night),
    accent: get('--pn-accent', DEFAULT_THEME.accent),
    accentInk: get('--pn-accent-ink', DEFAULT_THEME.accentInk),
    ink: get('--pn-ink', DEFAULT_THEME.ink),
    muted: get('--pn-muted', DEFAULT_THEME.muted),
    line: get('--pn-line', DEFAULT_THEME.line),
    fontSans: get('--pn-font-sans', DEFAULT_THEME.fontSans),
    fontMono: get('--pn-font-mono', DEFAULT_THEME.fontMono),
  }
}

/** NaN and ±Infinity as null: plotly's gap marker. */
function gaps(values: readonly number[]): (number | null)[] {
  return values.map((v) => (Number.isFinite(v) ? v : null))
}

function range(r: [number, number] | undefined, log: boolean): [number, number] | undefined {
  if (!r) return undefined
  if (!log) return r
  if (!(r[0] > 0 && r[1] > 0)) return undefined
  return [Math.log10(r[0]), Math.log10(r[1])]
}

/**
 * How tick numbers are written: plain (1000, 2000, 0.25) on a linear axis whose numbers are of everyday size, powers
 * of ten otherwise (2×10¹⁵, and 10, 10², 10³ on log axes). Plotly's power format on a linear 0–10 000 axis would write
 * a shared exponent into every tick ("0.1×10⁴"), which reads badly.
 */
export function tickExponentFormat(scale: 'linear' | 'log', largest: number): 'none' | 'power' {
  if (scale === 'log') return 'power'
  if (!(largest > 0) || !Number.isFinite(largest)) return 'none'
  return largest >= 1e5 || largest < 1e-3 ? 'power' : 'none'
}

/** The largest finite |value| in some lists of numbers (0 when there is none). */
function largestMagnitude(lists: readonly (readonly number[])[]): number {
  let m = 0
  for (const list of lists)
    for (const v of list) {
      const a = Math.abs(v)
      if (Number.isFinite(a) && a > m) m = a
    }
  return m
}

function axis(theme: Theme, title: string, scale: 'linear' | 'log', r: [number, number] | undefined, largest = 0) {
  return {
    title: { text: title, font: { size: 12.5, color: theme.ink }, standoff: 8 },
    type: scale,
    range: range(r, scale === 'log'),
    autorange: r ? false : true,
    showline: true,
    linecolor: theme.night,
    linewidth: 1.2,
    mirror: true,
    ticks: 'outside' as const,
    tickcolor: theme.night,
    ticklen: 4,
    tickfont: { family: theme.fontMono, size: 11, color: theme.ink },
    showgrid: true,
    gridcolor: theme.line,
    gridwidth: 1,
    zeroline: false,
    exponentformat: tickExponentFormat(scale, r ? Math.max(Math.abs(r[0]), Math.abs(r[1])) : largest),
    automargin: true,
  }
}

export interface RenderOptions {
  height?: number
  /** Known drawing width (files): lets the top margin make room for a legend that wraps. */
  width?: number
  /** Show the title inside the figure (exports want it; a card that shows the title itself does not). */
  showTitle?: boolean
}

/** The plotly traces and layout for a drawing model. */
export function figureToPlotly(model: FigureModel, theme: Theme = DEFAULT_THEME, opts: RenderOptions = {}): PlotSpec {
  const data: Data[] = []
  const xu = prettyUnit(model.x.unit)
  const yu = prettyUnit(model.y.unit)
  const hover = (name: string) =>
    `<b>${escapeHtml(name)}</b><br>%{x:.5~g}${xu ? ` ${xu}` : ''}<br>%{y:.5~g}${yu ? ` ${yu}` : ''}<extra></extra>`

  for (const s of model.series) {
    const color = s.color === 'accent' ? theme.accent : s.color
    data.push({
      type: 'scatter',
      mode: s.style === 'points' ? 'markers' : s.style === 'line+points' ? 'lines+markers' : 'lines',
      name: s.name,
      x: gaps(s.x),
      y: gaps(s.y),
      line: { color, width: s.color === 'accent' ? 2 : 1.8, ...(s.dashed ? { dash: 'dash' as const } : {}) },
      marker: { color, size: s.style === 'points' ? 5 : 4, line: { width: 0 } },
      connectgaps: false,
      hovertemplate: hover(s.name),
    })
  }

  let colorbarTitle: string | undefined
  if (model.sweep?.view === 'curves') {
    const f = model.sweep.family
    const pu = prettyUnit(f.parameterUnit)
    const label = model.sweep.parameterLabel
    const log = model.sweep.logParameter
    const finite = f.parameter.filter(Number.isFinite)
    const lo = Math.min(...finite)
    const hi = Math.max(...finite)
    const t = (p: number) => (hi > lo ? (log ? Math.log(p / lo) / Math.log(hi / lo) : (p - lo) / (hi - lo)) : 0)
    const legend = f.curves.length <= 8
    f.curves.forEach((c) => {
      const name = `${label} = ${formatNumber(c.parameter)}${pu ? ` ${pu}` : ''}`
      data.push({
        type: 'scatter',
        mode: 'lines',
        name,
        x: gaps(c.x),
        y: gaps(c.y),
        line: { color: rampColor(t(c.parameter)), width: 1.5 },
        showlegend: legend,
        hovertemplate: hover(name),
      })
    })
    if (!legend && f.curves.length > 0) {
      colorbarTitle = `${label}${pu ? ` (${pu})` : ''}`
      // an invisible trace that only carries the colour bar of the parameter
      data.push({
        type: 'scatter',
        mode: 'markers',
        x: [null],
        y: [null],
        showlegend: false,
        hoverinfo: 'skip',
        marker: {
          color: [log ? Math.log10(lo) : lo, log ? Math.log10(hi) : hi],
          colorscale: rampScale(),
          cmin: log ? Math.log10(lo) : lo,
          cmax: log ? Math.log10(hi) : hi,
          showscale: true,
          colorbar: colorbarSpec(theme, colorbarTitle, log, lo, hi),
        },
      })
    }
  } else if (model.sweep?.view === 'map') {
    const m = model.sweep.map
    data.push({
      type: 'heatmap',
      x: gaps(m.x),
      y: gaps(m.y),
      z: m.z.map(gaps),
      colorscale: rampScale(),
      colorbar: colorbarSpec(theme, model.sweep.zTitle, false, 0, largestMagnitude(m.z)),
      hovertemplate: `%{x:.5~g}${xu ? ` ${xu}` : ''}<br>%{y:.5~g}${yu ? ` ${yu}` : ''}<br><b>%{z:.4~g}</b>${model.sweep.zUnit ? ` ${escapeHtml(prettyUnit(model.sweep.zUnit))}` : ''}<extra></extra>`,
    })
  }

  const shapes: Partial<Shape>[] = []
  const annotations: Partial<Annotation>[] = []
  const vertical = model.markAxis === 'x'
  const extent = model.x.range ? [Math.min(...model.x.range), Math.max(...model.x.range)] : dataExtent(model)
  const band = extent
    ? (model.band ?? [])
        .filter((seg) => seg.to > extent[0] && seg.from < extent[1])
        .map((seg) => ({ ...seg, from: Math.max(seg.from, extent[0]), to: Math.min(seg.to, extent[1]) }))
    : []
  for (const seg of band)
    shapes.push(
      {
        type: 'rect',
        xref: 'x',
        yref: 'paper',
        x0: seg.from,
        x1: seg.to,
        y0: 0,
        y1: 1,
        fillcolor: seg.color,
        opacity: 0.13,
        line: { width: 0 },
        layer: 'below',
      },
      // a solid strip along the bottom edge, like the brand mark, so the band reads even where curves cover it
      {
        type: 'rect',
        xref: 'x',
        yref: 'paper',
        x0: seg.from,
        x1: seg.to,
        y0: 0,
        y1: 0.018,
        fillcolor: seg.color,
        opacity: 0.95,
        line: { width: 0 },
        layer: 'above',
      },
    )
  if (band.length && extent) {
    const lo = band[0].from < band[band.length - 1].from ? band[0].from : band[band.length - 1].from
    const hi = Math.max(...band.map((b) => b.to))
    const wide = model.x.scale === 'log' ? Math.log(hi / lo) > 0.12 * Math.log(extent[1] / extent[0]) : hi - lo > 0.12 * (extent[1] - extent[0])
    const mid = model.x.scale === 'log' ? Math.log10(Math.sqrt(lo * hi)) : (lo + hi) / 2
    if (wide)
      annotations.push({
        xref: 'x',
        yref: 'paper',
        x: mid,
        y: 0.022,
        yanchor: 'bottom',
        text: 'visible band',
        showarrow: false,
        font: { size: 10.5, color: theme.muted, family: theme.fontSans },
      })
  }
  for (const r of model.regions)
    shapes.push({
      type: 'rect',
      xref: 'x',
      yref: 'paper',
      x0: r.from,
      x1: r.to,
      y0: 0,
      y1: 1,
      fillcolor: theme.night,
      opacity: 0.07,
      line: { width: 0 },
      layer: 'below',
      label: { text: r.label, textposition: 'top center', font: { size: 10.5, color: theme.muted, family: theme.fontSans } },
    })
  // labels of close marks go to alternate sides of their lines and, in a crowd, step along them (see markLabelPlaces)
  const markAxisModel = vertical ? model.x : model.y
  const markExtent: [number, number] | null = vertical ? (extent ? [extent[0], extent[1]] : null) : valueExtent(axisValues(model, 'y'), model.y.scale === 'log')
  const places = markLabelPlaces(
    model.marks.map((m) => m.at),
    markAxisModel.range ? [Math.min(...markAxisModel.range), Math.max(...markAxisModel.range)] : markExtent,
    markAxisModel.scale === 'log',
  )
  model.marks.forEach((mark, i) => {
    const dash = MARK_DASHES[i % MARK_DASHES.length]
    const { side, level } = places[i]
    if (mark.band)
      shapes.push({
        type: 'rect',
        xref: vertical ? 'x' : 'paper',
        yref: vertical ? 'paper' : 'y',
        ...(vertical ? { x0: mark.band[0], x1: mark.band[1], y0: 0, y1: 1 } : { x0: 0, x1: 1, y0: mark.band[0], y1: mark.band[1] }),
        fillcolor: theme.accent,
        opacity: 0.16,
        line: { width: 0 },
        layer: 'below',
      })
    shapes.push({
      type: 'line',
      xref: vertical ? 'x' : 'paper',
      yref: vertical ? 'paper' : 'y',
      ...(vertical ? { x0: mark.at, x1: mark.at, y0: 0, y1: 1 } : { x0: 0, x1: 1, y0: mark.at, y1: mark.at }),
      line: { color: theme.accent, width: 1.6, dash },
      layer: 'above',
    })
    // the short name along the line, inside the frame (alternating sides so neighbouring marks do not collide);
    // the value with its unit goes in the legend
    const logAxis = (vertical ? model.x.scale : model.y.scale) === 'log'
    const pos = logAxis ? (mark.at > 0 ? Math.log10(mark.at) : null) : mark.at
    if (pos !== null)
      annotations.push({
        xref: vertical ? 'x' : 'paper',
        yref: vertical ? 'paper' : 'y',
        x: vertical ? pos : 1 - level * MARK_LABEL_STEP,
        y: vertical ? 1 - level * MARK_LABEL_STEP : pos,
        text: escapeHtml(mark.ref),
        showarrow: false,
        textangle: vertical ? -90 : 0,
        xanchor: vertical ? (side === 0 ? 'right' : 'left') : 'right',
        yanchor: vertical ? 'top' : side === 0 ? 'top' : 'bottom',
        xshift: vertical ? (side === 0 ? -1 : 1) : 0,
        font: { size: 11, color: theme.accentInk, family: theme.fontSans },
        bgcolor: withAlpha(theme.surface, 0.78),
        borderpad: 1,
      })
    data.push({
      type: 'scatter',
      mode: 'lines',
      name: mark.label,
      x: [null],
      y: [null],
      line: { color: theme.accent, width: 1.6, dash },
      hoverinfo: 'skip',
      showlegend: true,
    })
  })

  const title = opts.showTitle && model.title ? model.title : undefined
  const legendShown = data.filter((d) => (d as { showlegend?: boolean }).showlegend !== false).length > 1
  const layout: Partial<Layout> = {
    height: opts.height ?? 340,
    autosize: true,
    paper_bgcolor: theme.surface,
    plot_bgcolor: theme.paper,
    font: { family: theme.fontSans, size: 12, color: theme.ink },
    title: title
      ? { text: escapeHtml(title), x: 0.01, xanchor: 'left', yref: 'container', y: 1, yanchor: 'top', pad: { t: 12 }, font: { size: 14, color: theme.night } }
      : undefined,
    margin: { l: 64, r: colorbarTitle || model.sweep?.view === 'map' ? 24 : 18, t: (title ? 40 : 12) + (legendShown ? 24 * legendLines(data, opts.width) : 0), b: 50, pad: 0 },
    xaxis: axis(theme, model.x.title, model.x.scale, model.x.range, largestMagnitude(axisValues(model, 'x'))),
    yaxis: axis(theme, model.y.title, model.y.scale, model.y.range, largestMagnitude(axisValues(model, 'y'))),
    showlegend: legendShown,
    legend: {
      orientation: 'h',
      x: 0,
      xanchor: 'left',
      y: 1.02,
      yanchor: 'bottom',
      bgcolor: 'rgba(0,0,0,0)',
      font: { size: 11.5, color: theme.ink },
    },
    hovermode: 'closest',
    hoverlabel: { bgcolor: theme.surface, bordercolor: theme.night, font: { family: theme.fontMono, size: 11.5, color: theme.ink } },
    shapes,
    annotations,
  }
  return { data, layout, config: { displayModeBar: false } }
}

/** '#rrggbb' (or any other CSS colour) with an alpha, for label backgrounds. */
function withAlpha(color: string, alpha: number): string {
  const m = /^#([0-9a-f]{6})$/i.exec(color.trim())
  if (!m) return color
  const n = parseInt(m[1], 16)
  return `rgba(${(n >> 16) & 255}, ${(n >> 8) & 255}, ${n & 255}, ${alpha})`
}

/** Rows a horizontal legend needs at a width (about 6.5 px per character plus the symbol), at least one. */
function legendLines(data: Data[], width = 0): number {
  if (!width) return 1
  const usable = width - 90
  let rows = 1
  let x = 0
  for (const d of data) {
    const t = d as { name?: string; showlegend?: boolean }
    if (t.showlegend === false || !t.name) continue
    const w = 48 + 6.5 * t.name.length
    if (x > 0 && x + w > usable) {
      rows++
      x = 0
    }
    x += w
  }
  return rows
}

const MARK_DASHES = ['dash', 'dot', 'dashdot', 'longdash'] as const

/** How far (fraction of the frame) each further label of a crowd of marks steps along its line. */
const MARK_LABEL_STEP = 0.3
/** Marks closer than this fraction of the axis count as neighbours whose labels could collide. */
const MARK_NEIGHBOUR = 0.06

/**
 * Where each mark's label goes: `side` 0 before its line (left, or below), 1 after it; `level` 0 at the frame's edge,
 * 1, 2 … stepped along the line. Marks are taken in axis order; a run of marks each closer than MARK_NEIGHBOUR of the
 * axis span to the previous is a crowd: its labels alternate sides, and every pair after the first steps one level
 * in, so two labels never share a side and a level within a crowd. Two close gaps thus read "Eg1 | Eg2" on either
 * side of their lines; a third moves down. Without a known span every mark is its own neighbour (the safe case).
 */
export function markLabelPlaces(positions: readonly number[], span: [number, number] | null | undefined, log: boolean): { side: 0 | 1; level: number }[] {
  const t = (v: number) => (log ? (v > 0 ? Math.log10(v) : NaN) : v)
  const lo = span ? t(span[0]) : NaN
  const hi = span ? t(span[1]) : NaN
  const width = Number.isFinite(lo) && Number.isFinite(hi) && hi > lo ? hi - lo : NaN
  const order = positions.map((at, i) => ({ at: t(at), i })).sort((a, b) => (a.at - b.at) || a.i - b.i)
  const out: { side: 0 | 1; level: number }[] = positions.map(() => ({ side: 0, level: 0 }))
  let k = 0
  order.forEach((m, r) => {
    const prev = order[r - 1]
    const near = prev !== undefined && (!Number.isFinite(width) || !(Math.abs(m.at - prev.at) >= MARK_NEIGHBOUR * width))
    k = near ? k + 1 : 0
    out[m.i] = { side: (k % 2) as 0 | 1, level: Math.floor(k / 2) % 3 }
  })
  return out
}

/** The extent of finite values (positive ones on a log axis), or null. */
function valueExtent(lists: readonly (readonly number[])[], log: boolean): [number, number] | null {
  let lo = Infinity
  let hi = -Infinity
  for (const list of lists)
    for (const v of list)
      if (Number.isFinite(v) && (!log || v > 0)) {
        if (v < lo) lo = v
        if (v > hi) hi = v
      }
  return lo <= hi ? [lo, hi] : null
}

/** The numbers drawn along one axis: series, sweep curves, and a map's columns (x) or parameter rows (y). */
function axisValues(model: FigureModel, which: 'x' | 'y'): number[][] {
  const out: number[][] = model.series.map((s) => s[which])
  if (model.sweep?.view === 'curves') for (const c of model.sweep.family.curves) out.push(c[which])
  if (model.sweep?.view === 'map') out.push(which === 'x' ? model.sweep.map.x : model.sweep.map.y)
  return out
}

/** The x extent of everything drawn (series and sweeps), or null when nothing finite is drawn. */
function dataExtent(model: FigureModel): [number, number] | null {
  let lo = Infinity
  let hi = -Infinity
  const take = (xs: readonly number[]) => {
    for (const v of xs)
      if (Number.isFinite(v) && (model.x.scale !== 'log' || v > 0)) {
        if (v < lo) lo = v
        if (v > hi) hi = v
      }
  }
  for (const s of model.series) take(s.x)
  if (model.sweep?.view === 'curves') for (const c of model.sweep.family.curves) take(c.x)
  if (model.sweep?.view === 'map') take(model.sweep.map.x)
  return lo <= hi ? [lo, hi] : null
}

function colorbarSpec(theme: Theme, title: string, log: boolean, lo: number, hi: number) {
  const bar: Record<string, unknown> = {
    title: { text: escapeHtml(title), side: 'right', font: { size: 12, color: theme.ink, family: theme.fontSans } },
    thickness: 12,
    outlinecolor: theme.night,
    outlinewidth: 1,
    tickfont: { family: theme.fontMono, size: 10.5, color: theme.ink },
    exponentformat: tickExponentFormat('linear', Math.max(Math.abs(lo), Math.abs(hi))),
  }
  if (log && lo > 0 && hi > 0) {
    const ticks: number[] = []
    for (let e = Math.ceil(Math.log10(lo)); e <= Math.floor(Math.log10(hi)); e++) ticks.push(e)
    bar.tickvals = ticks
    bar.ticktext = ticks.map((e) => formatNumber(10 ** e))
  }
  return bar
}

/** Plotly renders labels as HTML-ish text: user names and labels must not inject markup. */
export function escapeHtml(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;')
}
