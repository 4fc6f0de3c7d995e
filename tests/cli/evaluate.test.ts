import { describe, expect, it } from 'vitest'
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { readFileSync } from 'node:fs'

const root = join(__dirname, '../..')
const example = join(root, 'examples/design-example.penumbra.json')

function evaluate(args: string[], input?: string): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/evaluate.ts', ...args], {
    cwd: root, input, encoding: 'utf8', timeout: 60000,
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
    expect(cells[0]).toMatchObject({ status: 'error', error: 'unknown name: nope' })
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
