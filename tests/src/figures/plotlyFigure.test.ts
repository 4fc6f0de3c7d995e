import { describe, it, expect } from 'vitest'
import { DEFAULT_THEME, escapeHtml, figureToPlotly, markLabelPlaces } from '../../../src/components/figures/plotlyFigure'
import { buildFigure } from '../../../shared/plot/figure'
import { HC_EV_NM } from '../../../shared/plot/units'
import type { FigureCell } from '../../../shared/schema/sheet'
import { results } from '../../shared/plot/fixtures'

const fig = (f: Partial<FigureCell>): FigureCell => ({ kind: 'figure', traces: [], ...f })

type AnyTrace = { type?: string; mode?: string; name?: string; x?: unknown[]; y?: unknown[]; showlegend?: boolean; line?: { dash?: string } }
type AnyShape = { type?: string; x0?: number; x1?: number; fillcolor?: string; line?: { dash?: string } }
type AnyNote = { x?: number; y?: number; text?: string; xanchor?: string }

describe('figureToPlotly', () => {
  it('figureToPlotly draws a spectrum with gaps as null and our frame colours', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T' }] }), results()))
    const t = spec.data[0] as AnyTrace
    expect(t.type).toBe('scatter')
    expect(t.mode).toBe('lines')
    expect(t.x).toEqual([900, 800, 700, null])
    const xa = spec.layout.xaxis as { linecolor?: string; title?: { text?: string } }
    expect(xa.linecolor).toBe(DEFAULT_THEME.night)
    expect(xa.title?.text).toBe('filmB.wavelength (nm)')
    expect(spec.layout.plot_bgcolor).toBe(DEFAULT_THEME.paper)
  })

  it('figureToPlotly gives log axes their range in decades', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], y: { scale: 'log', min: 10, max: 1e5 } }), results()))
    const ya = spec.layout.yaxis as { type?: string; range?: number[] }
    expect(ya.type).toBe('log')
    expect(ya.range).toEqual([1, 5])
  })

  it('figureToPlotly clips the visible band to the drawn data', () => {
    // filmB.wavelength spans 700–900 nm: only 700–750 nm of the band lies inside
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T' }], x: { visibleBand: true } }), results()))
    const rects = (spec.layout.shapes as AnyShape[]).filter((s) => s.type === 'rect')
    expect(rects.length).toBeGreaterThan(0)
    expect(Math.min(...rects.map((r) => r.x0!))).toBe(700)
    expect(Math.max(...rects.map((r) => r.x1!))).toBe(750)
  })

  it('figureToPlotly draws a band-gap mark as an accent line, a legend entry with its value and a label', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T' }], marks: ['edge.Eg'] }), results()))
    const line = (spec.layout.shapes as AnyShape[]).find((s) => s.type === 'line')!
    expect(line.x0).toBeCloseTo(HC_EV_NM / 1.4812, 9)
    const legend = (spec.data as AnyTrace[]).find((t) => t.name?.startsWith('edge.Eg'))!
    expect(legend.name).toBe('edge.Eg = 1.4812 ± 0.0021 eV (837.1 nm)')
    expect(legend.line?.dash).toBe(line.line?.dash)
    const note = (spec.layout.annotations as AnyNote[]).find((a) => a.text === 'edge.Eg')!
    expect(note.x).toBeCloseTo(HC_EV_NM / 1.4812, 9)
  })

  it('figureToPlotly places mark labels in decades on a log x axis', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], x: { scale: 'log' }, marks: ['Eg'] }), results()))
    const note = (spec.layout.annotations as AnyNote[]).find((a) => a.text === 'Eg')!
    expect(note.x).toBeCloseTo(Math.log10(1.48), 12)
  })

  it('figureToPlotly draws a sweep family with a ramp colour per curve and a legend of the parameter', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'E', y: 'A1' }], sweep: 'thick' }), results(), { sweepParameters: { thick: 'd' } }))
    const curves = spec.data as AnyTrace[]
    expect(curves.map((c) => c.name)).toEqual(['d = 100 nm', 'd = 200 nm', 'd = 300 nm'])
    const colors = new Set(curves.map((c) => (c as { line?: { color?: string } }).line?.color))
    expect(colors.size).toBe(3)
  })

  it('figureToPlotly draws a sweep map as a heatmap with a colour bar titled by the output', () => {
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'E', y: 'A1' }], sweep: 'thick', sweepView: 'map' }), results()))
    const h = spec.data[0] as { type?: string; z?: unknown[][]; colorbar?: { title?: { text?: string } } }
    expect(h.type).toBe('heatmap')
    expect(h.z).toHaveLength(3)
    expect(h.colorbar?.title?.text).toBe('A1 (%)')
  })

  it('escapeHtml keeps user labels from becoming markup', () => {
    expect(escapeHtml('<b>T</b> & R')).toBe('&lt;b&gt;T&lt;/b&gt; &amp; R')
  })
})

describe('markLabelPlaces', () => {
  it('markLabelPlaces puts the labels of two close gaps on opposite sides of their lines', () => {
    // 1.48 and 1.50 eV on a 1.2–2.0 eV axis: 2.5 % of the span apart
    expect(markLabelPlaces([1.5, 1.48], [1.2, 2.0], false)).toEqual([
      { side: 1, level: 0 },
      { side: 0, level: 0 },
    ])
  })
  it('markLabelPlaces steps a third close label along its line', () => {
    expect(markLabelPlaces([1.48, 1.49, 1.5], [1.2, 2.0], false)).toEqual([
      { side: 0, level: 0 },
      { side: 1, level: 0 },
      { side: 0, level: 1 },
    ])
  })
  it('markLabelPlaces leaves marks far apart at the frame edge on one side', () => {
    expect(markLabelPlaces([1.3, 1.9], [1.2, 2.0], false)).toEqual([
      { side: 0, level: 0 },
      { side: 0, level: 0 },
    ])
  })
  it('markLabelPlaces measures closeness in decades on a log axis', () => {
    // 100 and 110 on a 1–10⁴ log axis: 0.04 of the four decades apart, close; 100 and 1000: a whole decade, far
    expect(markLabelPlaces([100, 110], [1, 1e4], true).map((p) => p.side)).toEqual([0, 1])
    expect(markLabelPlaces([100, 1000], [1, 1e4], true).map((p) => p.side)).toEqual([0, 0])
  })
  it('figureToPlotly draws the labels of two close band-gap marks on either side of their lines', () => {
    const rs = { ...results(), Eg2: { index: 50, name: 'Eg2', kind: 'parameter' as const, status: 'ok' as const, value: 1.5, unit: 'eV' } }
    const spec = figureToPlotly(buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], marks: ['Eg', 'Eg2'] }), rs))
    const notes = spec.layout.annotations as AnyNote[]
    const a = notes.find((n) => n.text === 'Eg')!
    const b = notes.find((n) => n.text === 'Eg2')!
    expect([a.xanchor, b.xanchor]).toEqual(['right', 'left'])
  })
})
