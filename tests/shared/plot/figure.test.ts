import { describe, it, expect } from 'vitest'
import { axisTitle, buildFigure, isGeometric, MAX_DRAWN_POINTS } from '../../../shared/plot/figure'
import { HC_EV_NM } from '../../../shared/plot/units'
import { formatNumber } from '../../../shared/plot/format'
import type { FigureCell } from '../../../shared/schema/sheet'
import { E, results } from './fixtures'

const fig = (f: Partial<FigureCell>): FigureCell => ({ kind: 'figure', traces: [], ...f })

describe('axisTitle', () => {
  it('axisTitle names what is drawn with its unit, and the spectral quantity only when nothing is named', () => {
    expect(axisTitle(undefined, 'eV', ['E'], 'energy')).toBe('E (eV)')
    expect(axisTitle(undefined, 'nm', [], 'wavelength')).toBe('Wavelength (nm)')
  })
  it('axisTitle prefers the user\'s label and typesets the unit', () => {
    expect(axisTitle('α', '1/cm', ['alpha'])).toBe('α (cm⁻¹)')
    expect(axisTitle(undefined, '', ['a', 'b', 'a'])).toBe('a, b')
    expect(axisTitle(undefined, '', [])).toBe('value')
  })
})

describe('buildFigure', () => {
  it('buildFigure draws formula traces in their units with a log y axis', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], y: { scale: 'log' } }), results())
    expect(m.messages).toEqual([])
    expect(m.series).toHaveLength(1)
    expect(m.series[0].x).toEqual(E)
    expect(m.series[0].name).toBe('alpha')
    expect(m.series[0].style).toBe('line')
    expect(m.x.title).toBe('E (eV)')
    expect(m.y.title).toBe('alpha (cm⁻¹)')
    expect(m.y.scale).toBe('log')
    expect(m.x.quantity).toBe('energy')
  })

  it('buildFigure converts a spectrum on a wavelength axis to the axis unit (eV)', () => {
    const m = buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T', label: 'film B' }], x: { unit: 'eV' } }), results())
    expect(m.series[0].x[0]).toBeCloseTo(HC_EV_NM / 900, 12)
    expect(m.series[0].x[3]).toBeNaN()
    expect(m.series[0].name).toBe('film B')
    expect(m.y.unit).toBe('%')
  })

  it('buildFigure says which trace is not drawn when lengths differ', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'short' }] }), results())
    expect(m.series).toEqual([])
    expect(m.messages).toEqual(['Trace 1 (short against E) is not drawn: "E" has 13 values but "short" has 3; they must have the same length.'])
  })

  it('buildFigure names an unknown, a failed and a blocked cell and keeps drawing the rest', () => {
    const m = buildFigure(
      fig({ traces: [{ x: 'E', y: 'alpha' }, { x: 'E', y: 'nope' }, { x: 'E', y: 'broken' }, { x: 'E', y: 'waiting' }] }),
      results(),
    )
    expect(m.series).toHaveLength(1)
    expect(m.messages).toEqual([
      'Trace 2 (nope against E) is not drawn. There is no cell named "nope" in this sheet.',
      'Trace 3 (broken against E) is not drawn. Cell "broken" has an error: unknown function "alpah_edge".',
      'Trace 4 (waiting against E) is not drawn. Cell "waiting" is blocked (blocked: input broken failed); fix that input first.',
    ])
  })

  it('buildFigure refuses a trace whose unit does not fit the axis, saying why', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }, { x: 'E', y: 'A1' }] }), results())
    expect(m.series).toHaveLength(1)
    expect(m.messages[0]).toBe('Trace 2 (A1 against E) is not drawn: its y cannot convert "%" (fraction) to "1/cm" (1/length).')
  })

  it('buildFigure broadcasts a scalar against a series (a level line)', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'd' }] }), results())
    expect(m.series[0].y).toEqual(E.map(() => 850))
  })

  it('buildFigure shades the visible band on a wavelength axis and explains when it cannot', () => {
    const onNm = buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T' }], x: { visibleBand: true } }), results())
    expect(onNm.band).toHaveLength(74)
    const onEv = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], x: { visibleBand: true } }), results())
    expect(onEv.band![0].to).toBeCloseTo(HC_EV_NM / 380, 9)
    const onPercent = buildFigure(fig({ traces: [{ x: 'A1', y: 'alpha' }], x: { visibleBand: true } }), results())
    expect(onPercent.band).toBeNull()
    expect(onPercent.messages).toContain('The visible band can only be shaded on a wavelength or energy axis; this x axis is in "%".')
  })

  it('buildFigure marks band gaps on energy and wavelength axes alike', () => {
    const ev = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], marks: ['Eg', 'edge.Eg'] }), results())
    expect(ev.marks.map((m) => m.at)).toEqual([1.48, 1.4812])
    const nm = buildFigure(fig({ traces: [{ x: 'filmB.wavelength', y: 'filmB.T' }], marks: ['edge.Eg', 'nothing'] }), results())
    expect(nm.marks[0].at).toBeCloseTo(HC_EV_NM / 1.4812, 9)
    expect(nm.messages).toEqual(['Mark "nothing": There is no cell named "nothing" in this sheet.'])
  })

  it('buildFigure draws a sweep as a family against the first trace\'s x', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'A1' }], sweep: 'thick' }), results())
    expect(m.series).toEqual([])
    expect(m.sweep?.view).toBe('curves')
    if (m.sweep?.view !== 'curves') return
    expect(m.sweep.family.curves).toHaveLength(3)
    expect(m.sweep.yUnit).toBe('%')
    expect(m.x.unit).toBe('eV')
    expect(m.y.unit).toBe('%')
    expect(m.y.title).toBe('A1 (%)')
  })

  it('buildFigure draws a sweep as a map with the parameter on y', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'A1' }], sweep: 'thick', sweepView: 'map' }), results())
    expect(m.sweep?.view).toBe('map')
    expect(m.y.unit).toBe('nm')
    if (m.sweep?.view === 'map') expect(m.sweep.zUnit).toBe('%')
  })

  it('buildFigure thins a very long series for drawing and records the original length', () => {
    const n = 100_000
    const x = Array.from({ length: n }, (_, i) => 300 + i * 0.01)
    const rs = { ...results(), wl: { index: 40, name: 'wl', kind: 'formula', status: 'ok' as const, value: x, unit: 'nm' } }
    const m = buildFigure(fig({ traces: [{ x: 'wl', y: 'wl' }] }), rs)
    expect(m.series[0].x.length).toBeLessThanOrEqual(MAX_DRAWN_POINTS)
    expect(m.series[0].thinnedFrom).toBe(n)
  })

  it('buildFigure warns when a log axis would show nothing of a trace', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }, { x: 'E', y: 'neg' }], y: { scale: 'log' } }), {
      ...results(),
      neg: { index: 41, name: 'neg', kind: 'formula', status: 'ok', value: E.map(() => -1), unit: '1/cm' },
    })
    expect(m.messages).toEqual(['Trace 2 (neg against E) has no positive values, so nothing of it shows on a log axis.'])
  })
})

describe('buildFigure with scalar sweep outputs', () => {
  it('buildFigure draws each scalar sweep output named by a trace as its own curve against the parameter', () => {
    const rs = results()
    ;(rs.thick.value as { outputs: Record<string, unknown> }).outputs.J2 = [11, 16, 19]
    rs.J2 = { index: 50, name: 'J2', kind: 'formula', status: 'ok', value: 16, unit: 'mA/cm^2' }
    const m = buildFigure(
      fig({ traces: [{ x: 'd', y: 'Jsc', label: 'flat film' }, { x: 'd', y: 'J2', label: 'light trapping' }], sweep: 'thick' }),
      rs,
    )
    expect(m.messages).toEqual([])
    expect(m.sweep).toBeUndefined()
    expect(m.series.map((s) => s.name)).toEqual(['flat film', 'light trapping'])
    expect(m.series[1].x).toEqual([100, 200, 300])
    expect(m.series[1].y).toEqual([11, 16, 19])
    expect(m.x.title).toBe('d (nm)')
    expect(m.y.title).toBe('Jsc, J2 (mA/cm²)')
  })
})

describe('isGeometric', () => {
  it('isGeometric tells a log sweep from a linear one', () => {
    expect(isGeometric([10, 100, 1000, 10000])).toBe(true)
    expect(isGeometric([100, 150, 200])).toBe(false)
    expect(isGeometric([0, 1, 10])).toBe(false)
  })
})

describe('buildFigure on log axes with negative values', () => {
  it('buildFigure says how many negative values a log y axis leaves out, and the lowest', () => {
    // a measured α that dips below zero at three points below the edge (invented values)
    const measured = E.map((e, i) => (i < 3 ? -(i + 1) * 10 : 100 * e))
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'a_meas' }], y: { scale: 'log' } }), {
      ...results(),
      a_meas: { index: 42, name: 'a_meas', kind: 'formula', status: 'ok', value: measured, unit: '1/cm' },
    })
    expect(m.series).toHaveLength(1)
    expect(m.messages).toEqual([
      `Trace 1 (a_meas against E): 3 of its ${E.length} y values are negative (lowest -30 cm⁻¹) and cannot be shown on the log axis; they are left out of the curve.`,
    ])
  })
  it('buildFigure stays quiet about zeros on a log axis (a model is zero below its gap)', () => {
    const m = buildFigure(fig({ traces: [{ x: 'E', y: 'alpha' }], y: { scale: 'log' } }), results())
    expect(m.messages).toEqual([])
  })
  it('buildFigure notes negative x values on a log x axis', () => {
    const m = buildFigure(fig({ traces: [{ x: 'shifted', y: 'alpha' }], x: { scale: 'log' } }), {
      ...results(),
      shifted: { index: 43, name: 'shifted', kind: 'formula', status: 'ok', value: E.map((e) => e - E[1]), unit: 'eV' },
    })
    expect(m.messages).toEqual([`Trace 1 (alpha against shifted): 1 of its ${E.length} x values is negative (lowest ${formatNumber(E[0] - E[1])} eV) and cannot be shown on the log axis; it is left out of the curve.`])
  })
})
