import { describe, expect, it } from 'vitest'
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { readFileSync } from 'node:fs'

const root = join(__dirname, '../..')
const example = join(root, 'examples/design-example.penumbra.json')

function evaluate(args: string[], input?: string): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/evaluate.ts', ...args], {
    cwd: root, input, encoding: 'utf8', timeout: 110000, maxBuffer: 1 << 30,
  })
  return { status: r.status, stdout: r.stdout, stderr: r.stderr }
}

describe('command-line evaluator', () => {
  it('evaluate <file> prints the result object as JSON and exits 0', () => {
    const r = evaluate([example])
    expect(r.stderr).toBe('')
    expect(r.status).toBe(0)
    const result = JSON.parse(r.stdout)
    expect(result.title).toBe('Edge model of film B')
    expect(result.cells).toHaveLength(9)
    expect(result.cells[5]).toMatchObject({ name: 'edge', kind: 'fit', status: 'ok', unit: 'eV' })
    expect(result.cells[6].value.parameter).toHaveLength(59)
  })

  it('evaluate - reads the sheet from standard input', () => {
    const r = evaluate(['-'], readFileSync(example, 'utf8'))
    expect(r.status).toBe(0)
    expect(JSON.parse(r.stdout).cells[0]).toMatchObject({ name: 'Eg', value: 1.48, unit: 'eV', dimension: 'energy' })
  })

  it('evaluate exits 0 for a valid sheet whose cells have errors, with the errors in the result', () => {
    const sheet = {
      format: 'penumbra.sheet', version: 1, title: 'broken cells',
      cells: [
        { kind: 'formula', name: 'u', source: 'nope + 1' },
        { kind: 'formula', name: 'v', source: 'u * 2' },
      ],
    }
    const r = evaluate(['-'], JSON.stringify(sheet))
    expect(r.status).toBe(0)
    const cells = JSON.parse(r.stdout).cells
    expect(cells[0]).toMatchObject({ status: 'error', error: 'unknown name: nope; check the spelling, or add a cell named nope' })
    expect(cells[1]).toMatchObject({ status: 'blocked', error: 'blocked: input u failed' })
  })

  it('evaluate exits 2 for an invalid sheet, listing each problem by JSON path on stderr', () => {
    const sheet = { format: 'penumbra.sheet', version: 1, title: 'x', cells: [{ kind: 'note', text: '' }, { kind: 'formula', name: 'a' }] }
    const r = evaluate(['-'], JSON.stringify(sheet))
    expect(r.status).toBe(2)
    expect(r.stdout).toBe('')
    expect(r.stderr).toContain('cells[1].source: required')
  })

  it('evaluate exits 2 for text that is not JSON and for a file that does not exist', () => {
    const bad = evaluate(['-'], '{"format":')
    expect(bad.status).toBe(2)
    expect(bad.stderr).toMatch(/\(root\): not valid JSON/)
    const missing = evaluate(['no-such-sheet.penumbra.json'])
    expect(missing.status).toBe(2)
    expect(missing.stderr).toBe('no-such-sheet.penumbra.json: cannot read: no such file\n')
  })

  it('evaluate gives fit energies in the fit\'s unit and sweep rows in each output\'s display unit', () => {
    const sheet = JSON.parse(readFileSync(example, 'utf8'))
    sheet.cells[5].unit = 'meV'
    const r = evaluate(['-'], JSON.stringify(sheet))
    expect(r.status).toBe(0)
    const cells = JSON.parse(r.stdout).cells
    expect(cells[5].unit).toBe('meV')
    // DESIGN §5 sheet: the window 1.55–1.9 eV lies on the Tauc branch of alpha_edge, whose gap is Eg = 1.48 eV
    expect(Math.abs(cells[5].value.Eg - 1480)).toBeLessThan(1e-6)
    // rows of A1 (shown in %) at d = 100 nm: 100·(1 − exp(−α·d)) from the α the same run printed in 1/cm
    const alpha = cells[3].value as number[]
    const row = cells[6].value.outputs.A1[0] as number[]
    expect(cells[6].value.parameter[0]).toBe(100)
    alpha.forEach((a, i) => {
      const expected = 100 * -Math.expm1(-a * 100 * 100e-9)
      expect(Math.abs(row[i] - expected)).toBeLessThanOrEqual(1e-9 * Math.max(expected, 1e-12))
    })
  })

  it('evaluate reports a blocked cell with the result shape of DESIGN §5 and keeps the other cells', () => {
    const sheet = {
      format: 'penumbra.sheet', version: 1, title: 'blocked',
      cells: [
        { kind: 'formula', name: 'u', source: '1 +' },
        { kind: 'formula', name: 'v', source: 'u * 2' },
        { kind: 'parameter', name: 'w', value: 3, unit: 'nm' },
      ],
    }
    const cells = JSON.parse(evaluate(['-'], JSON.stringify(sheet)).stdout).cells
    expect(cells[1]).toEqual({ index: 1, id: 'cell-2', name: 'v', kind: 'formula', status: 'blocked', error: 'blocked: input u failed' })
    expect(cells[2]).toEqual({
      index: 2, id: 'cell-3', name: 'w', kind: 'parameter', status: 'ok', value: 3, unit: 'nm', dimension: 'length', warnings: [],
    })
  })

  it('evaluate lists every problem of an invalid file on its own line, by JSON path', () => {
    const sheet = {
      version: 1, title: 'x',
      cells: [{ kind: 'parameter', name: 'a', value: '1' }, { kind: 'fit', name: 'f', x: 'a', y: 'a' }, { kind: 'formula', name: 'b' }],
    }
    const r = evaluate(['-'], JSON.stringify(sheet))
    expect(r.status).toBe(2)
    expect(r.stderr.trim().split('\n')).toEqual([
      'standard input: not a valid Penumbra sheet file:',
      'format: required',
      'cells[0].value: must be a number, not a string',
      'cells[1].method: required',
      'cells[2].source: required',
    ])
  })

  it('evaluate exits 2 when the path is a directory', () => {
    const r = evaluate([root])
    expect(r.status).toBe(2)
    expect(r.stderr).toBe(`${root}: cannot read: it is a directory\n`)
  })

  it('evaluate --pretty prints the same result object, indented', () => {
    const plain = evaluate([example])
    const pretty = evaluate(['--pretty', example])
    expect(pretty.status).toBe(0)
    expect(pretty.stdout).toBe(`${JSON.stringify(JSON.parse(plain.stdout), null, 2)}\n`)
  })

  it('evaluate prints a sheet at the size limit (ten million numbers) as valid JSON', () => {
    const cells = Array.from({ length: 11 }, (_, i) => ({ kind: 'formula', name: `g${i}`, source: 'grid(0, 1, 1000000)' }))
    const r = evaluate(['-'], JSON.stringify({ format: 'penumbra.sheet', version: 1, title: 'large', cells }))
    expect(r.status).toBe(0)
    const out = JSON.parse(r.stdout)
    expect(out.cells[9].value).toHaveLength(1000000)
    expect(out.cells[10].status).toBe('error')
  }, 120000)

  it('evaluate without a file prints the usage and exits 2', () => {
    const r = evaluate([])
    expect(r.status).toBe(2)
    expect(r.stderr).toMatch(/^usage: npm run --silent evaluate -- /)
  })

  it('npm run --silent evaluate -- <file> is the documented command', () => {
    const r = spawnSync('npm', ['run', '--silent', 'evaluate', '--', example], { cwd: root, encoding: 'utf8', timeout: 60000 })
    expect(r.status).toBe(0)
    expect(JSON.parse(r.stdout).cells).toHaveLength(9)
  })
})
