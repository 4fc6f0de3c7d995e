/** The formula messages a new user meets first: a number beside a unit, interpolating outside the data, a cell named like a function. */
import { describe, expect, it } from 'vitest'
import { formula, pick, run } from './helpers'

describe('a number written next to a unit or a name', () => {
  it('formula("532 nm") says to write 532*nm, with or without the space', () => {
    expect(formula('532 nm').error).toMatch(/^write 532\*nm, not "532 nm"/)
    expect(formula('532nm').error).toMatch(/^write 532\*nm, not "532nm"/)
  })

  it('formula inside a call says write 532*nm instead of counting arguments', () => {
    const r = formula('photon_energy(532 nm)')
    expect(r.status).toBe('error')
    expect(r.error).toMatch(/^write 532\*nm/)
    expect(r.error).not.toMatch(/argument/)
  })

  it('formula keeps exponents, names ending in digits and word operators as they are', () => {
    expect(formula('1.5e3 um').error).toMatch(/^write 1\.5e3\*um/)
    expect(formula('2 x', undefined, [{ kind: 'parameter', name: 'x', value: 1 }]).error).toMatch(/^write 2\*x, not "2 x": a number and a name/)
    expect(formula('x2 + 1e-3', undefined, [{ kind: 'parameter', name: 'x2', value: 1 }]).status).toBe('ok')
    expect(formula('1 and 0').status).toBe('ok')
  })
})

describe('interpolate outside its data', () => {
  const data = [
    { kind: 'formula', name: 'E', source: 'grid(1.2*eV, 2.4*eV, 13)', unit: 'eV' },
    { kind: 'formula', name: 'alpha', source: 'E/eV*1e4/cm', unit: '1/cm' },
  ]

  it('formula at a point above the data says it lies outside and gives the range in the unit of the x cell', () => {
    const r = formula('interpolate(3*eV, E, alpha)', '1/cm', data)
    expect(r.status).toBe('error')
    expect(r.error).toBe('interpolate: the point 3 eV lies outside the data, whose x runs from 1.2 eV to 2.4 eV; interpolate does not extrapolate: choose a point inside that range')
  })

  it('formula with x shown in nm gives the range in nm', () => {
    const r = formula('interpolate(100*nm, lam, y)', undefined, [
      { kind: 'formula', name: 'lam', source: 'grid(400*nm, 800*nm, 5)', unit: 'nm' },
      { kind: 'formula', name: 'y', source: '[1, 2, 3, 4, 5]' },
    ])
    expect(r.error).toMatch(/the point 100 nm lies outside the data, whose x runs from 400 nm to 800 nm/)
  })

  it('formula with every point of an array outside is an error; partly outside gives NaN there only', () => {
    expect(formula('interpolate([3, 4]*eV, E, alpha)', '1/cm', data).error).toMatch(/the point 3 eV lies outside the data/)
    const partly = formula('interpolate([2, 3]*eV, E, alpha)', '1/cm', data)
    expect(partly.status).toBe('ok')
    expect((partly.value as (number | null)[])[0]).toBeCloseTo(2e4, 8)
  })

  it('formula inside the data interpolates as before', () => {
    expect(formula('interpolate(1.8*eV, E, alpha)', '1/cm', data).value).toBeCloseTo(1.8e4, 8)
  })
})

describe('a cell named like a library function', () => {
  it('evaluate warns that sqrt is also a library function, and sqrt(…) still calls it', () => {
    const r = run([
      { kind: 'formula', name: 'sqrt', source: '16' },
      { kind: 'formula', name: 'y', source: 'sqrt(sqrt)' },
    ])
    expect(pick(r, 'sqrt').warnings?.[0]).toMatch(/the name sqrt is also a library function/)
    expect(pick(r, 'y').value).toBe(4)
    expect(pick(r, 'y').warnings).toEqual([])
  })

  it('evaluate gives no such warning to an ordinary name', () => {
    expect(pick(run([{ kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' }]), 'Eg').warnings).toEqual([])
  })
})
