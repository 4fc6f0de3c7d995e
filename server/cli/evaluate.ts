/**
 * Command-line evaluator: `npm run --silent evaluate -- <file.penumbra.json>` (or `-` for standard input) prints the
 * evaluation result object (DESIGN §5) as JSON on standard output.
 *
 * Exit status: 0 for a valid sheet, even when cells have errors (they are in the result); 2 when the file cannot be
 * read or is not a valid sheet file, with one problem per line on standard error (`cells[3].source: required`).
 * Option `--pretty` indents the JSON.
 *
 * `--check` takes an exported snapshot file (GET /api/snapshots/:id/file: the sheet file plus `snapshot: { hash,
 * results }`), recomputes it and compares: exit 0 when the sheet's hash and every stored result match to the last
 * bit, 1 naming each cell that differs (and a changed hash), 2 for a file that is not a valid snapshot file.
 */
import { readFileSync } from 'node:fs'
import { evaluateSheet, type EvaluationResult } from '../../shared/engine/index'
import { parseSheetFileText } from '../../shared/schema/sheet'
import { checkSnapshot } from './checkSnapshot'

const USAGE = 'usage: npm run --silent evaluate -- [--pretty | --check] <file.penumbra.json | ->'

function readInput(arg: string): string {
  return arg === '-' ? readFileSync(0, 'utf8') : readFileSync(arg, 'utf8')
}

export function main(argv: readonly string[]): number {
  const check = argv.includes('--check')
  const args = argv.filter((a) => a !== '--pretty' && a !== '--check')
  const pretty = argv.includes('--pretty')
  if (args.length !== 1 || (args[0].startsWith('--') && args[0] !== '-')) {
    process.stderr.write(`${USAGE}\n`)
    return 2
  }
  const source = args[0]
  let text: string
  try {
    text = readInput(source)
  } catch (err) {
    const e = err as NodeJS.ErrnoException
    const why = e.code === 'ENOENT' ? 'no such file' : e.code === 'EISDIR' ? 'it is a directory' : e.message
    process.stderr.write(`${source === '-' ? 'standard input' : source}: cannot read: ${why}\n`)
    return 2
  }
  if (check)
    return checkSnapshot(text, source === '-' ? 'standard input' : source, (l) => process.stdout.write(`${l}\n`), (l) => process.stderr.write(`${l}\n`))
  const parsed = parseSheetFileText(text)
  if (!parsed.ok) {
    const where = source === '-' ? 'standard input' : source
    process.stderr.write(`${where}: not a valid Penumbra sheet file:\n`)
    for (const issue of parsed.issues) process.stderr.write(`${issue.path || '(root)'}: ${issue.message}\n`)
    return 2
  }
  const result = evaluateSheet(parsed.value)
  writeJson(result, pretty)
  return 0
}

/**
 * Writes the result object as JSON, one cell at a time: the text of a large sheet's whole result can be longer than
 * one JavaScript string may be. The output is the same text JSON.stringify would give (indented with `--pretty`).
 */
function writeJson(result: EvaluationResult, pretty: boolean): void {
  const indent = pretty ? 2 : undefined
  const nl = pretty ? '\n' : ''
  const pad = pretty ? '  ' : ''
  const entries = Object.entries(result).filter(([, v]) => v !== undefined)
  process.stdout.write(`{${nl}`)
  entries.forEach(([key, value], k) => {
    const sep = k < entries.length - 1 ? ',' : ''
    const name = `${pad}${JSON.stringify(key)}:${pretty ? ' ' : ''}`
    if (key !== 'cells' || !Array.isArray(value) || value.length === 0) {
      const text = JSON.stringify(value, null, indent).replace(/\n/g, `\n${pad}`)
      process.stdout.write(`${name}${text}${sep}${nl}`)
      return
    }
    process.stdout.write(`${name}[${nl}`)
    value.forEach((cell, i) => {
      const text = JSON.stringify(cell, null, indent).replace(/\n/g, `\n${pad}${pad}`)
      process.stdout.write(`${pad}${pad}${text}${i < value.length - 1 ? ',' : ''}${nl}`)
    })
    process.stdout.write(`${pad}]${sep}${nl}`)
  })
  process.stdout.write('}\n')
}

// a reader that stops early (`| head`) is not an error of the evaluator
process.stdout.on('error', (err: NodeJS.ErrnoException) => {
  if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0)
  throw err
})
process.exitCode = main(process.argv.slice(2))
