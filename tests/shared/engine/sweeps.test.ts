import { describe, expect, it } from 'vitest'
import { sweepValues } from '../../../shared/engine/sweeps'
import type { SweepCell } from '../../../shared/schema/sheet'
import { pick, rel, run } from './helpers'

const slab = [
  { kind: 'parameter', name: 'd', value: 850, unit: 'nm' },
  { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 7)', unit: 'eV' },
  { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, 1.48*eV, 4e9*eV/cm^2)', unit: '1/cm' },
  { kind: 'formula', name: 'A1', source: 'absorbed_fraction(alpha, d)', unit: '%' },
  { kind: 'formula', name: 'A_mean', source: 'mean(A1)', unit: '%' },
]

describe('sweep cells', () => {
  it('sweepValues spaces linear steps evenly and log steps by equal ratios, ends exact', () => {
    const lin = { kind: 'sweep', name: 's', parameter: 'p', from: 100, to: 3000, steps: 59, outputs: ['y'] } as SweepCell
    const v = sweepValues(lin)
    expect(v.length).toBe(59)
    expect(v[0]).toBe(100)
    expect(v[1]).toBe(150)
    expect(v[58]).toBe(3000)
    const log = sweepValues({ ...lin, from: 10, to: 10000, steps: 4, scale: 'log' })
    expect(log).toEqual([10, 100, 1000, 10000])
    expect(sweepValues({ ...lin, from: 0.1, to: 1, steps: 4 })).toEqual([0.1, 0.4, 0.7, 1])
  })

  it('a log sweep over a non-positive range is an error saying so', () => {
    const res = run([...slab, { kind: 'sweep', name: 'sw', parameter: 'd', from: -10, to: -1000, steps: 3, scale: 'log', outputs: ['A1'] }])
    expect(pick(res, 'sw')).toMatchObject({ status: 'error', error: 'a log sweep needs from and to above zero, but it runs from -10 to -1000; make both positive or use linear steps' })
  })

  it('a sweep gives one row per parameter value for each output, in that output\'s display unit', () => {
    const res = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 3000, steps: 59, unit: 'nm', outputs: ['A1', 'A_mean'] }])
    const s = pick(res, 'thick')
    expect(s.status).toBe('ok')
    expect(s.unit).toBe('nm')
    const v = s.value as { parameter: number[]; outputs: Record<string, (number | number[])[]> }
    expect(v.parameter).toHaveLength(59)
    expect(v.outputs.A1).toHaveLength(59)
    expect(v.outputs.A1[0]).toHaveLength(7)
    expect(typeof v.outputs.A_mean[3]).toBe('number')
  })

  it('each row equals the output evaluated with the parameter set to that value', () => {
    const res = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 3000, steps: 30, unit: 'nm', outputs: ['A1'] }])
    const rows = (pick(res, 'thick').value as { outputs: { A1: number[][] } }).outputs.A1
    const at500 = run([{ ...slab[0], value: 1100 }, ...slab.slice(1)])
    const direct = pick(at500, 'A1').value as number[]
    rows[10].forEach((x, i) => expect(rel(x, direct[i]) < 1e-12 || Math.abs(x - direct[i]) < 1e-12).toBe(true))
  })

  it('the sweep unit may differ from the parameter\'s, as long as the dimension agrees', () => {
    const res = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 0.1, to: 3, steps: 3, unit: 'um', outputs: ['A_mean'] }])
    const v = pick(res, 'thick').value as { parameter: number[]; outputs: { A_mean: number[] } }
    expect(v.parameter).toEqual([0.1, 1.55, 3])
    const byNm = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 3000, steps: 3, unit: 'nm', outputs: ['A_mean'] }])
    expect((pick(byNm, 'thick').value as { outputs: { A_mean: number[] } }).outputs.A_mean[2]).toBeCloseTo(v.outputs.A_mean[2], 12)
  })

  it('a log sweep steps by equal ratios', () => {
    const res = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 10, to: 1000, steps: 3, scale: 'log', unit: 'nm', outputs: ['A_mean'] }])
    const p = (pick(res, 'thick').value as { parameter: number[] }).parameter
    expect(p).toEqual([10, 100, 1000])
  })

  it('a sweep unit of the wrong dimension is an error naming both', () => {
    const res = run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 1, to: 2, steps: 3, unit: 'eV', outputs: ['A1'] }])
    expect(pick(res, 'thick').error).toBe("the sweep's unit eV is for an energy, but d is a length; give the sweep a unit for a length, such as nm, or leave it empty to use d's unit")
  })

  it('sweeping a formula cell is an error; so is an output that is not a formula', () => {
    expect(pick(run([...slab, { kind: 'sweep', name: 'sw', parameter: 'alpha', from: 1, to: 2, steps: 3, outputs: ['A1'] }]), 'sw').error)
      .toBe('the swept name alpha must be a parameter cell (it is a formula cell)')
    expect(pick(run([...slab, { kind: 'sweep', name: 'sw', parameter: 'd', from: 1, to: 2, steps: 3, outputs: ['d'] }]), 'sw').error)
      .toBe('output d must be a formula cell (it is a parameter cell)')
  })

  it('an output that does not depend on the parameter gets a warning', () => {
    const res = run([...slab, { kind: 'sweep', name: 'sw', parameter: 'd', from: 1, to: 2, steps: 3, unit: 'nm', outputs: ['alpha'] }])
    expect(pick(res, 'sw').warnings).toContain('the output alpha does not depend on d: its rows are all the same; sweep a parameter that alpha uses, or drop it from the outputs')
  })

  it('a step that fails names the parameter value and the failing cell', () => {
    const res = run([...slab, { kind: 'sweep', name: 'sw', parameter: 'd', from: -100, to: 100, steps: 3, unit: 'nm', outputs: ['A1'] }])
    expect(pick(res, 'sw').error).toBe('at d = -100 nm: A1: absorbed_fraction: the thickness d must be zero or positive, but it is -100 nm')
  })

  it('a sweep re-runs fit cells between the parameter and the outputs', () => {
    const res = run([
      { kind: 'parameter', name: 'Eg', value: 1.4, unit: 'eV' },
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 401)', unit: 'eV' },
      { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, Eg, 4e9*eV/cm^2)', unit: '1/cm' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.9, to: 2.3, unit: 'eV' },
      { kind: 'formula', name: 'gap', source: 'edge.Eg', unit: 'eV' },
      { kind: 'sweep', name: 'sw', parameter: 'Eg', from: 1.3, to: 1.7, steps: 5, unit: 'eV', outputs: ['gap'] },
    ])
    const rows = (pick(res, 'sw').value as { outputs: { gap: number[] } }).outputs.gap
    ;[1.3, 1.4, 1.5, 1.6, 1.7].forEach((g, i) => expect(rel(rows[i], g)).toBeLessThan(1e-9))
  })

  it('a model fit re-run inside a sweep sees the swept value in its model', () => {
    // y = 2x + 5 fitted by a·x + d with only a free: least squares gives a = Σx(y − d)/Σx² for each swept d
    const xs = [0, 1, 2, 3, 4, 5]
    const ys = xs.map((x) => 2 * x + 5)
    const res = run([
      { kind: 'spectrum', name: 'data', columns: { x: { unit: '', values: xs }, y: { unit: '', values: ys } } },
      { kind: 'formula', name: 'x', source: 'data.x' },
      { kind: 'formula', name: 'y', source: 'data.y' },
      { kind: 'parameter', name: 'a', value: 1 },
      { kind: 'parameter', name: 'd', value: 5 },
      { kind: 'formula', name: 'model', source: 'a*x + d' },
      { kind: 'fit', name: 'lin', method: 'model', x: 'x', y: 'y', model: 'model', parameters: [{ name: 'a' }] },
      { kind: 'formula', name: 'slope_fit', source: 'lin.a' },
      { kind: 'sweep', name: 'sw', parameter: 'd', from: 0, to: 10, steps: 3, outputs: ['slope_fit'] },
    ])
    const rows = (pick(res, 'sw').value as { outputs: { slope_fit: number[] } }).outputs.slope_fit
    const sxx = xs.reduce((s, x) => s + x * x, 0)
    ;[0, 5, 10].forEach((d, i) => {
      const expected = xs.reduce((s, x, k) => s + x * (ys[k] - d), 0) / sxx
      expect(rel(rows[i], expected)).toBeLessThan(1e-8)
    })
  })

  it('progress is reported for a long sweep, ending at 1', () => {
    const seen: number[] = []
    run([...slab, { kind: 'sweep', name: 'thick', parameter: 'd', from: 100, to: 3000, steps: 100, unit: 'nm', outputs: ['A1'] }], {
      onProgress: (_id, f) => seen.push(f),
    })
    expect(seen.length).toBeGreaterThan(5)
    expect(seen.at(-1)).toBe(1)
  })
})
