import { describe, expect, it } from 'vitest'
import seedrandom from 'seedrandom'
import { alphaEdge } from '../../../shared/optics/index'
import { pick, rel, run } from './helpers'

const eV = 1.602176634e-19

/** A direct edge computed by the formula language itself: E in eV on a grid, α = alpha_direct(E, 1.5 eV, B). */
const directEdge = [
  { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 501)', unit: 'eV' },
  { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, 1.5*eV, 4e9*eV/cm^2)', unit: '1/cm' },
]

/** Standard normal deviates from a seeded generator (Box–Muller). */
function gaussian(seed: string): () => number {
  const rng = seedrandom(seed)
  return () => Math.sqrt(-2 * Math.log(rng() || 1e-12)) * Math.cos(2 * Math.PI * rng())
}

describe('fit cells: tauc', () => {
  it('a tauc fit of a noise-free direct edge recovers Eg = 1.5 eV and B, r² = 1', () => {
    const res = run([...directEdge, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2.0, unit: 'eV' }])
    const fit = pick(res, 'edge')
    expect(fit.status).toBe('ok')
    expect(fit.unit).toBe('eV')
    const v = fit.value as Record<string, number>
    expect(rel(v.Eg, 1.5)).toBeLessThan(1e-9)
    expect(v.Eg_err).toBeLessThan(1e-9)
    // B in the units of the x and y cells (eV and 1/cm): (αE)² = B·(E − Eg) gives eV/cm², the 4e9 of the formula
    expect(rel(v.B, 4e9)).toBeLessThan(1e-9)
    expect(v.r2).toBeCloseTo(1, 12)
    expect(v.n).toBe(201)
    expect(fit.units).toEqual({ Eg: 'eV', Eg_err: 'eV', B: 'eV/cm^2', B_err: 'eV/cm^2', r2: '1', n: '1' })
  })

  it('a tauc fit states B in units made of the x and y cells\' units, which read back through the unit parser', () => {
    const res = run([
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 501)', unit: 'meV' },
      { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, 1.5*eV, 4e9*eV/cm^2)', unit: '1/um' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1600, to: 2000 },
      { kind: 'formula', name: 'Bsi', source: 'edge.B', unit: 'meV/um^2' },
    ])
    const fit = pick(res, 'edge')
    expect(fit.units?.B).toBe('meV/um^2')
    // the same B read by a formula in the stated unit: one number, two routes
    expect(rel((fit.value as Record<string, number>).B, pick(res, 'Bsi').value as number)).toBeLessThan(1e-12)
    // 4e9 eV/cm² = 4e9·1000 meV / (1e4 µm)² = 4e4 meV/µm²
    expect(rel((fit.value as Record<string, number>).B, 4e4)).toBeLessThan(1e-9)
    const indirect = run([
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 501)', unit: 'eV' },
      { kind: 'formula', name: 'alpha', source: 'alpha_indirect(E, 1.12*eV, 1e9*eV/cm^0.5)', unit: '1/cm' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 2, from: 1.3, to: 1.8 },
    ])
    expect(pick(indirect, 'edge').units?.B).toBe('1/(eV^0.5*cm^0.5)')
  })

  it('the window is read in the x cell\'s display unit, and the gap is shown in the fit\'s unit', () => {
    const res = run([
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 501)', unit: 'meV' },
      directEdge[1],
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1600, to: 2000, unit: 'meV' },
    ])
    const v = pick(res, 'edge').value as Record<string, number>
    expect(rel(v.Eg, 1500)).toBeLessThan(1e-9)
    expect(v.n).toBe(201)
  })

  it('without a fit unit the gap is shown in the x cell\'s energy unit', () => {
    const res = run([...directEdge, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2.0 }])
    expect(pick(res, 'edge').unit).toBe('eV')
  })

  it('a tauc fit with r = 2 recovers the gap of an indirect edge', () => {
    const res = run([
      directEdge[0],
      { kind: 'formula', name: 'alpha', source: 'alpha_indirect(E, 1.12*eV, 1e9*eV/cm^0.5)', unit: '1/cm' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 2, from: 1.3, to: 1.8, unit: 'eV' },
    ])
    expect(rel((pick(res, 'edge').value as Record<string, number>).Eg, 1.12)).toBeLessThan(1e-9)
  })

  it('formulas read a fit\'s results in SI as edge.Eg; an unknown result is an error listing them', () => {
    const res = run([
      ...directEdge,
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2.0, unit: 'eV' },
      { kind: 'formula', name: 'gap_nm', source: 'photon_wavelength(edge.Eg)', unit: 'nm' },
      { kind: 'formula', name: 'bad', source: 'edge.Eu' },
    ])
    // hc/e / 1.5 eV = 1239.841984 / 1.5 nm (CODATA 2018 exact constants)
    expect(rel(pick(res, 'gap_nm').value as number, 1239.841984332 / 1.5)).toBeLessThan(1e-9)
    expect(pick(res, 'gap_nm').warnings).toEqual([])
    expect(pick(res, 'bad').error).toBe('the fit edge has no result "Eu" (it has Eg, Eg_err, B, B_err, r2, n)')
  })

  it('a window with too few points is a clear error', () => {
    const res = run([...directEdge, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 1.602 }])
    expect(pick(res, 'edge').error).toBe('the window 1.6 to 1.602 eV holds 2 of the 501 points of E, which run from 1.2 to 2.2 eV; a Tauc fit needs at least 3: widen the window')
  })

  it("a window given in another unit than the x cell's says what range x covers, in x's unit", () => {
    const res = run([
      { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.2*eV, 501)', unit: 'meV' },
      directEdge[1],
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2.0, unit: 'eV' },
      { kind: 'fit', name: 'tail', method: 'urbach', x: 'E', y: 'alpha', from: 1.6, to: 2.0 },
    ])
    expect(pick(res, 'edge').error).toBe('the window 1.6 to 2 meV holds 0 of the 501 points of E, which run from 1200 to 2200 meV; a Tauc fit needs at least 3: move the window onto the data (from and to are in meV, the unit of E)')
    expect(pick(res, 'tail').error).toBe('the window 1.6 to 2 meV holds 0 of the 501 points of E, which run from 1200 to 2200 meV; an Urbach fit needs at least 3: move the window onto the data (from and to are in meV, the unit of E)')
  })

  it('a window reaching below the gap is flagged: the fitted gap lies inside it', () => {
    const res = run([...directEdge, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.3, to: 2.0 }])
    expect(pick(res, 'edge').warnings?.join(' ')).toMatch(/not straight|inside the window/)
  })

  it('seeded noisy edges give Eg within three reported standard errors of the truth', () => {
    const noise = gaussian('tauc-noise-1')
    const E = Array.from({ length: 301 }, (_, i) => 1.2 + i * 0.003)
    const alpha = E.map((e) => (e > 1.5 ? Math.sqrt(4e9 * (e - 1.5)) / e : 0) * (1 + 0.02 * noise()))
    const res = run([
      { kind: 'spectrum', name: 'data', columns: { E: { unit: 'eV', values: E }, alpha: { unit: '1/cm', values: alpha } } },
      { kind: 'formula', name: 'Ex', source: 'data.E', unit: 'eV' },
      { kind: 'formula', name: 'ax', source: 'data.alpha', unit: '1/cm' },
      { kind: 'fit', name: 'edge', method: 'tauc', x: 'Ex', y: 'ax', r: 0.5, from: 1.6, to: 2.0, unit: 'eV' },
    ])
    const v = pick(res, 'edge').value as Record<string, number>
    expect(v.Eg_err).toBeGreaterThan(0)
    expect(Math.abs(v.Eg - 1.5)).toBeLessThan(3 * v.Eg_err)
  })
})

describe('fit cells: urbach', () => {
  it('an urbach fit of a noise-free tail recovers Eu = 20 meV, shown in meV', () => {
    const res = run([
      directEdge[0],
      { kind: 'formula', name: 'alpha', source: 'alpha_urbach(E, 1e5/cm, 1.5*eV, 20*meV)', unit: '1/cm' },
      { kind: 'fit', name: 'tail', method: 'urbach', x: 'E', y: 'alpha', from: 1.25, to: 1.45, unit: 'meV' },
    ])
    const v = pick(res, 'tail').value as Record<string, number>
    expect(rel(v.Eu, 20)).toBeLessThan(1e-9)
    expect(v.r2).toBeCloseTo(1, 12)
    // E0 is the top of the data in the window (shown in meV) and alpha0 the tail's α there, in the α cell's 1/cm:
    // α = 1e5 /cm · exp((E0 − 1.5 eV) / 20 meV), the form alpha_urbach(E, alpha0, E0, Eu) (Urbach 1953)
    expect(v.E0).toBeLessThanOrEqual(1450 + 1e-9)
    expect(v.E0).toBeGreaterThan(1400)
    expect(rel(v.alpha0, 1e5 * Math.exp((v.E0 - 1500) / 20))).toBeLessThan(1e-6)
    expect(pick(res, 'tail').units).toEqual({ Eu: 'meV', Eu_err: 'meV', alpha0: '1/cm', E0: 'meV', r2: '1', n: '1' })
  })

  it('an urbach fit over a window with zero absorption is a clear error', () => {
    const res = run([...directEdge, { kind: 'fit', name: 'tail', method: 'urbach', x: 'E', y: 'alpha', from: 1.3, to: 1.45 }])
    expect(pick(res, 'tail').error).toBe('the y cell alpha is zero at E = 1.3 eV, inside the window; an Urbach fit takes its logarithm, so α must be a finite number above zero throughout the window: move the window or fix the data there')
  })

  it('a tauc fit over a window with negative or non-finite absorption names the first such point in the cells\' units', () => {
    const negative = [directEdge[0], { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, 1.5*eV, 4e9*eV/cm^2) - 100/cm', unit: '1/cm' }]
    expect(pick(run([...negative, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.45, to: 2 }]), 'edge').error)
      .toBe('the y cell alpha is negative (-100 1/cm) at E = 1.45 eV, inside the window; a Tauc fit needs a finite α of zero or more throughout the window: move the window or fix the data there')
    const gap = [directEdge[0], { kind: 'formula', name: 'alpha', source: 'alpha_direct(E, 1.5*eV, 4e9*eV/cm^2) + log(E - 1.7*eV)*0', unit: '1/cm' }]
    expect(pick(run([...gap, { kind: 'fit', name: 'edge', method: 'tauc', x: 'E', y: 'alpha', r: 0.5, from: 1.6, to: 2 }]), 'edge').error)
      .toBe('the y cell alpha is not a finite number at E = 1.6 eV, inside the window; a Tauc fit needs a finite α of zero or more throughout the window: move the window or fix the data there')
  })

  it('a fit whose x is not an energy gets a warning naming the dimension', () => {
    const res = run([
      { kind: 'formula', name: 'lam', source: 'grid(500*nm, 1000*nm, 101)', unit: 'nm' },
      { kind: 'formula', name: 'alpha', source: 'exp(lam/(100*nm)) / cm', unit: '1/cm' },
      { kind: 'fit', name: 'tail', method: 'urbach', x: 'lam', y: 'alpha', from: 600, to: 900 },
    ])
    expect(pick(res, 'tail').warnings).toContain('the x cell lam should be a photon energy (eV), not a length (nm); fit against a formula cell photon_energy(lam) instead')
  })
})

describe('fit cells: model (Levenberg–Marquardt)', () => {
  const truth = { Eg: 1.52, B: 4.2e9, Eu: 24 } // eV, eV/cm², meV
  const E = Array.from({ length: 161 }, (_, i) => 1.4 + i * 0.0025)
  const exact = Array.from(alphaEdge(Float64Array.from(E, (e) => e * eV), truth.Eg * eV, truth.B * eV * 1e4, 0.5, truth.Eu * 1e-3 * eV) as Float64Array, (a) => a / 100)
  const sheet = (alpha: number[]): unknown[] => [
    { kind: 'spectrum', name: 'data', columns: { E: { unit: 'eV', values: E }, alpha: { unit: '1/cm', values: alpha } } },
    { kind: 'formula', name: 'Ex', source: 'data.E', unit: 'eV' },
    { kind: 'formula', name: 'am', source: 'data.alpha', unit: '1/cm' },
    { kind: 'parameter', name: 'Eg', value: 1.48, unit: 'eV' },
    { kind: 'parameter', name: 'B', value: 3e9, unit: 'eV/cm^2' },
    { kind: 'parameter', name: 'Eu', value: 30, unit: 'meV' },
    { kind: 'formula', name: 'model', source: 'alpha_edge(Ex, Eg, B, 0.5, Eu)', unit: '1/cm' },
    {
      kind: 'fit', name: 'edge', method: 'model', x: 'Ex', y: 'am', model: 'model',
      parameters: [{ name: 'Eg', min: 1.3, max: 1.7 }, { name: 'B', min: 1e8, max: 1e11 }, { name: 'Eu', min: 5, max: 80 }],
    },
  ]

  it('a model fit recovers the parameters of a noise-free edge, each shown in its parameter cell\'s unit', () => {
    const fit = pick(run(sheet(exact)), 'edge')
    expect(fit.status).toBe('ok')
    const v = fit.value as Record<string, number | number[] | boolean>
    expect(rel(v.Eg as number, truth.Eg)).toBeLessThan(1e-6)
    expect(rel(v.B as number, truth.B)).toBeLessThan(1e-5)
    expect(rel(v.Eu as number, truth.Eu)).toBeLessThan(1e-5)
    expect(v.converged).toBe(true)
    expect((v.residuals as number[]).length).toBe(161)
    expect(v.n).toBe(161)
  })

  it('seeded noisy data recovers every parameter within three reported standard errors', () => {
    const noise = gaussian('model-noise-7')
    const fit = pick(run(sheet(exact.map((a) => a * (1 + 0.01 * noise()) + 5 * noise()))), 'edge')
    const v = fit.value as Record<string, number>
    for (const k of ['Eg', 'B', 'Eu'] as const) {
      expect(v[`${k}_err`], k).toBeGreaterThan(0)
      expect(Math.abs(v[k] - truth[k]), k).toBeLessThan(3 * v[`${k}_err`])
    }
  })

  it('the window limits the points fitted', () => {
    const cells = sheet(exact)
    ;(cells[7] as Record<string, unknown>).from = 1.45
    ;(cells[7] as Record<string, unknown>).to = 1.7
    const v = pick(run(cells), 'edge').value as Record<string, number>
    expect(v.n).toBe(101)
    expect(rel(v.Eg, truth.Eg)).toBeLessThan(1e-6)
  })

  it('formulas read fitted parameters in SI: edge.Eu is in joules', () => {
    const cells = [...sheet(exact), { kind: 'formula', name: 'eu', source: 'edge.Eu', unit: 'meV' }]
    expect(rel(pick(run(cells), 'eu').value as number, truth.Eu)).toBeLessThan(1e-5)
  })

  it('a model fit of a straight line equals ordinary least squares, standard errors included', () => {
    // closed form: slope = Sxy/Sxx, intercept = ȳ − slope·x̄, var(slope) = s²/Sxx, var(intercept) = s²(1/n + x̄²/Sxx),
    // s² = SSR/(n − 2) (Draper & Smith, Applied Regression Analysis, 3rd ed., ch. 1)
    const xs = [0, 1, 2, 3, 4, 5, 6, 7, 8, 9]
    const noise = [0.3, -0.2, 0.1, -0.4, 0.25, 0.05, -0.15, 0.35, -0.3, 0]
    const ys = xs.map((x, i) => 2 * x + 1 + noise[i])
    const n = xs.length
    const xm = xs.reduce((a, b) => a + b) / n
    const ym = ys.reduce((a, b) => a + b) / n
    const sxx = xs.reduce((a, x) => a + (x - xm) ** 2, 0)
    const slope = xs.reduce((a, x, i) => a + (x - xm) * (ys[i] - ym), 0) / sxx
    const intercept = ym - slope * xm
    const ssr = xs.reduce((a, x, i) => a + (ys[i] - intercept - slope * x) ** 2, 0)
    const s2 = ssr / (n - 2)
    const res = run([
      { kind: 'spectrum', name: 'data', columns: { x: { unit: '', values: xs }, y: { unit: '', values: ys } } },
      { kind: 'formula', name: 'x', source: 'data.x' },
      { kind: 'formula', name: 'y', source: 'data.y' },
      { kind: 'parameter', name: 'a', value: 1 },
      { kind: 'parameter', name: 'b', value: 0 },
      { kind: 'formula', name: 'line', source: 'a*x + b' },
      { kind: 'fit', name: 'lin', method: 'model', x: 'x', y: 'y', model: 'line', parameters: [{ name: 'a' }, { name: 'b' }] },
    ])
    const v = pick(res, 'lin').value as Record<string, number>
    expect(rel(v.a, slope)).toBeLessThan(1e-8)
    expect(rel(v.b, intercept)).toBeLessThan(1e-8)
    expect(rel(v.a_err, Math.sqrt(s2 / sxx))).toBeLessThan(1e-6)
    expect(rel(v.b_err, Math.sqrt(s2 * (1 / n + (xm * xm) / sxx)))).toBeLessThan(1e-6)
    expect(rel(v.chi2, ssr)).toBeLessThan(1e-8)
  })

  it('a model fit window with too few points for its parameters is a clear error', () => {
    const cells = sheet(exact)
    const fit = cells[7] as Record<string, unknown>
    const error = pick(run([...cells.slice(0, 7), { ...fit, from: 1.5, to: 1.5005 }]), 'edge').error
    expect(error).toBe('the window 1.5 to 1.5005 eV holds 1 of the 161 points of Ex, which run from 1.4 to 1.8 eV; a model fit of 3 parameters needs at least 4: widen the window')
  })

  it('a model fit refuses a start value outside its bounds, or reversed bounds, in the parameter cell\'s unit', () => {
    const cells = sheet(exact)
    const fit = cells[7] as Record<string, unknown>
    const withEg = (q: Record<string, unknown>) =>
      pick(run([...cells.slice(0, 7), { ...fit, parameters: [{ name: 'Eg', ...q }, { name: 'B' }, { name: 'Eu' }] }]), 'edge').error
    expect(withEg({ min: 1.5, max: 1.7 })).toBe('the start value 1.48 eV of Eg is below its minimum 1.5 eV; start inside the bounds or widen them')
    expect(withEg({ start: 1.8, max: 1.7 })).toBe('the start value 1.8 eV of Eg is above its maximum 1.7 eV; start inside the bounds or widen them')
    expect(withEg({ min: 1.7, max: 1.3 })).toBe('the bounds of Eg are reversed: min 1.7 eV is above max 1.3 eV; swap them')
  })

  it('a model fit that runs past the cell\'s time budget is stopped with the budget as set', () => {
    // a sine fitted to scrambled data over 200,000 points: one evaluation of the model takes a few milliseconds, the
    // fit keeps iterating far longer than the 1 s budget (left alone, it runs for minutes)
    const x = Array.from({ length: 200000 }, (_, i) => i / 200000)
    const res = run([
      { kind: 'spectrum', name: 'data', columns: { x: { unit: '', values: x }, y: { unit: '', values: x.map((_, i) => ((i * 7919) % 1000) / 1000) } } },
      { kind: 'formula', name: 'x', source: 'data.x' },
      { kind: 'formula', name: 'y', source: 'data.y' },
      { kind: 'parameter', name: 'a', value: 1 },
      { kind: 'formula', name: 'curve', source: 'sin(a*x*1000)' },
      { kind: 'fit', name: 'slow', method: 'model', x: 'x', y: 'y', model: 'curve', parameters: [{ name: 'a' }] },
    ], { timeBudgetMs: 1000 })
    expect(pick(res, 'curve').status).toBe('ok')
    expect(pick(res, 'slow').error).toBe('evaluation took longer than the 1 s budget for one cell and was stopped; use shorter grids, fewer sweep steps or fewer free fit parameters')
  })

  it('a model fit says what is wrong with its model or parameters', () => {
    const cells = sheet(exact)
    const fit = cells[7] as Record<string, unknown>
    expect(pick(run([...cells.slice(0, 7), { ...fit, model: 'Ex' }]), 'edge').error).toBe('the model Ex does not depend on any of the free parameters')
    expect(pick(run([...cells.slice(0, 7), { ...fit, model: 'data' }]), 'edge').error).toBe('the model data must be a formula cell')
    expect(pick(run([...cells.slice(0, 7), { ...fit, parameters: [{ name: 'model' }] }]), 'edge').error)
      .toBe('the free parameter model must be a parameter cell')
  })
})
