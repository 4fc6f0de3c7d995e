import { describe, expect, it } from 'vitest'
import { readFileSync, readdirSync } from 'node:fs'
import { join } from 'node:path'
import { formatPath, parseSheetFile, parseSheetFileText, withCellIds } from '../../../shared/schema/sheet'

const examples = join(__dirname, '../../../examples')
const sheet = (cells: unknown[]): unknown => ({ format: 'penumbra.sheet', version: 1, title: 'T', cells })

function problems(input: unknown): string[] {
  const r = parseSheetFile(input)
  if (r.ok) return []
  return r.issues.map((i) => `${i.path}: ${i.message}`)
}

describe('parseSheetFile', () => {
  it('parseSheetFile accepts every example sheet in examples/', () => {
    const files = readdirSync(examples).filter((f) => f.endsWith('.penumbra.json'))
    expect(files.length).toBeGreaterThanOrEqual(3)
    for (const f of files) {
      const r = parseSheetFileText(readFileSync(join(examples, f), 'utf8'))
      expect(r.ok, f).toBe(true)
    }
  })

  it('parseSheetFile reports a missing formula source as "cells[3].source: required"', () => {
    const cells = [
      { kind: 'parameter', name: 'a', value: 1 },
      { kind: 'parameter', name: 'b', value: 2 },
      { kind: 'note', text: 'x' },
      { kind: 'formula', name: 'c' },
    ]
    expect(problems(sheet(cells))).toEqual(['cells[3].source: required'])
  })

  it('parseSheetFile lists every problem of a file, each by its JSON path', () => {
    const p = problems({
      format: 'penumbra.sheet',
      version: 2,
      cells: [
        { kind: 'parameter', name: '9lives', value: 'x' },
        { kind: 'sweep', name: 's', parameter: 'a', from: 0, to: 1, steps: 1, outputs: [] },
        { kind: 'spectrum', name: 'sp', columns: { wavelength: { values: [1, 2] } } },
      ],
    })
    expect(p).toContain('title: required')
    expect(p.some((x) => x.startsWith('version: '))).toBe(true)
    expect(p.some((x) => x.startsWith('cells[0].name: must start with a letter'))).toBe(true)
    expect(p.some((x) => x.startsWith('cells[0].value: '))).toBe(true)
    expect(p.some((x) => x.startsWith('cells[1].steps: '))).toBe(true)
    expect(p.some((x) => x.startsWith('cells[1].outputs: '))).toBe(true)
    expect(p).toContain('cells[2].columns.wavelength.unit: required')
  })

  it('parseSheetFile names an unknown cell kind and lists the kinds there are', () => {
    expect(problems(sheet([{ kind: 'chart', name: 'x' }]))).toEqual([
      'cells[0].kind: unknown cell kind; expected one of parameter, formula, spectrum, fit, sweep, figure, note, stack',
    ])
  })

  it('parseSheetFile rejects duplicate names and ids, pointing at the second use', () => {
    const p = problems(sheet([
      { id: 'x', kind: 'parameter', name: 'a', value: 1 },
      { id: 'x', kind: 'parameter', name: 'a', value: 2 },
    ]))
    expect(p).toContain('cells[1].name: duplicate name "a" (also cells[0])')
    expect(p).toContain('cells[1].id: duplicate id "x" (also cells[0])')
  })

  it('parseSheetFile rejects a fit method it does not know', () => {
    const p = problems(sheet([{ kind: 'fit', name: 'f', method: 'linear', x: 'E', y: 'a' }]))
    expect(p.length).toBe(1)
    expect(p[0].startsWith('cells[0].method: ')).toBe(true)
  })

  it('parseSheetFile says "required" for a missing field of a fixed value or a choice (format, version, method)', () => {
    const p = problems({ title: 'T', cells: [{ kind: 'fit', name: 'f', x: 'E', y: 'alpha' }, { kind: 'parameter', name: 'p' }] })
    expect(p).toEqual(['format: required', 'version: required', 'cells[0].method: required', 'cells[1].value: required'])
  })

  it('parseSheetFile accepts the stack cell of the sheet-file form, formulas as strings', () => {
    const stack = {
      kind: 'stack', name: 'cell1', wavelength: 'lam', ambient: '1', angle: '0*deg', polarization: 'unpolarized',
      layers: [{ name: 'absorber', thickness: '500*nm', n: 'n_abs', k: 'k_abs' }],
      substrate: { name: 'glass', n: '1.52', k: '0', thickness: '1*mm', coherent: false },
    }
    expect(parseSheetFile(sheet([stack])).ok).toBe(true)
  })

  it('parseSheetFile names an unknown field, a bad polarisation and a number where a stack formula belongs', () => {
    const p = problems(sheet([{
      kind: 'stack', name: 'st', wavelength: 'lam', polarization: 'circular', colour: 'red',
      layers: [{ name: 'ITO', thickness: 120, n: '1.9', k: '0' }], substrate: { name: 'glass', n: '1.52', k: '0' },
    }]))
    expect(p).toEqual([
      'cells[0].polarization: must be one of "s", "p", "unpolarized"',
      'cells[0].layers[0].thickness: must be a string, not a number',
      'cells[0]: unknown field(s): colour',
    ])
  })
})

describe('parseSheetFileText', () => {
  it('parseSheetFileText reports broken JSON as one problem at the root', () => {
    const r = parseSheetFileText('{"format": ')
    expect(r.ok).toBe(false)
    if (!r.ok) {
      expect(r.issues).toHaveLength(1)
      expect(r.issues[0].path).toBe('')
      expect(r.issues[0].message).toMatch(/^not valid JSON/)
    }
  })

  it('parseSheetFileText reads a file saved with a byte-order mark', () => {
    const r = parseSheetFileText('\ufeff{"format": "penumbra.sheet", "version": 1, "title": "T", "cells": []}')
    expect(r.ok).toBe(true)
  })
})

describe('formatPath and withCellIds', () => {
  it('formatPath writes array indices in brackets and fields with dots', () => {
    expect(formatPath(['cells', 3, 'columns', 'T', 'values', 7])).toBe('cells[3].columns.T.values[7]')
    expect(formatPath([])).toBe('')
  })

  it('withCellIds keeps existing ids and gives the others fresh ones that do not collide', () => {
    const r = parseSheetFile(sheet([{ id: 'c1', kind: 'note', text: '' }, { kind: 'note', text: '' }]))
    if (!r.ok) throw new Error('invalid')
    let n = 0
    const s = withCellIds(r.value, () => `c${++n}`)
    expect(s.cells.map((c) => c.id)).toEqual(['c1', 'c2'])
  })
})
