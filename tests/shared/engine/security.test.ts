import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import seedrandom from 'seedrandom'
import { compileFormula } from '../../../shared/engine/compile'
import { formula, run, pick } from './helpers'

/**
 * Formulas come from any lab member and run in every colleague's browser. They must never reach a JavaScript
 * prototype, constructor, function or global. Each attempt below must be an error on the cell, and must not run.
 */
const g = globalThis as Record<string, unknown>

describe('formula security', () => {
  beforeEach(() => {
    g.__penumbraPwned = false
  })
  afterEach(() => {
    delete g.__penumbraPwned
  })

  const attempts = [
    'constructor',
    'constructor.constructor("globalThis.__penumbraPwned = true")()',
    '__proto__',
    'x.__proto__',
    'x.constructor',
    'prototype',
    'x.prototype',
    'this',
    'this.constructor',
    'process',
    'process.exit(1)',
    'process.mainModule',
    'Function("globalThis.__penumbraPwned = true")()',
    'Function',
    'eval("globalThis.__penumbraPwned = true")',
    'globalThis',
    'require("fs")',
    'toString()',
    'valueOf',
    'hasOwnProperty("x")',
    'grid.constructor',
    'sum.call(1)',
    'x.toString()',
    'filmB.constructor',
    'filmB.__proto__.polluted',
    'edge.constructor',
    '[].constructor',
    'E = 3',
    'f(x) = x; f(1)',
  ]

  for (const source of attempts) {
    it(`a formula "${source}" is an error and executes nothing`, () => {
      const res = run([
        { kind: 'parameter', name: 'x', value: 1 },
        { kind: 'spectrum', name: 'filmB', columns: { T: { unit: '%', values: [1, 2] } } },
        { kind: 'formula', name: 'out', source },
      ])
      const r = pick(res, 'out')
      expect(r.status).toBe('error')
      expect(typeof r.error).toBe('string')
      expect(r.value).toBeUndefined()
      expect(g.__penumbraPwned).toBe(false)
    })
  }

  it('a formula cannot pollute Object.prototype', () => {
    for (const s of ['__proto__.polluted', 'x.__proto__.polluted', 'constructor.prototype.polluted']) formula(s)
    expect(({} as Record<string, unknown>).polluted).toBeUndefined()
  })

  it('compileFormula refuses names of the JavaScript object model with a security error', () => {
    for (const s of ['constructor', 'a.__proto__', 'this', 'toString', '__defineGetter__']) {
      expect(() => compileFormula(s), s).toThrow(/not allowed in formulas/)
    }
  })

  it('a library function name used as a value is an unknown name, not a JavaScript function', () => {
    expect(formula('grid').error).toMatch(/^unknown name: grid; grid is a function/)
    expect(formula('sum + 1').error).toMatch(/^unknown name: sum; sum is a function/)
  })

  it('a cell named like a prototype member is just a cell, and reaches nothing else', () => {
    const res = run([
      { kind: 'parameter', name: 'process', value: 4 },
      { kind: 'formula', name: 'out', source: 'process * 2' },
    ])
    expect(pick(res, 'out').value).toBe(8)
  })
})

describe('errors are values', () => {
  it('two thousand seeded random formulas never throw out of the engine; each cell is ok or an error', () => {
    const rng = seedrandom('penumbra-formula-fuzz')
    const pieces = ['x', 'E', 'nm', 'eV', '1', '2.5e3', '(', ')', '+', '-', '*', '/', '^', ',', '.', '[', ']', '?', ':', '>', '==',
      'and', 'not', 'grid(', 'sum(', 'at(', 'filmB', '.T', 'constructor', '__proto__', 'exp(', ' ', ';', '=', '"', '!', '%']
    for (let k = 0; k < 2000; k++) {
      const n = 1 + Math.floor(rng() * 12)
      let source = ''
      for (let i = 0; i < n; i++) source += pieces[Math.floor(rng() * pieces.length)]
      const res = run([
        { kind: 'parameter', name: 'x', value: 2, unit: 'nm' },
        { kind: 'spectrum', name: 'filmB', columns: { T: { unit: '%', values: [1, 2] } } },
        { kind: 'formula', name: 'out', source },
        { kind: 'formula', name: 'after', source: 'out * 2' },
      ])
      const out = pick(res, 'out')
      expect(['ok', 'error'], source).toContain(out.status)
      if (out.status !== 'ok') expect(pick(res, 'after').status, source).toBe('blocked')
      expect(pick(res, 'x').status).toBe('ok')
    }
  })
})
