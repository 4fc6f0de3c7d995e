/**
 * Runs every benchmark case in bench/cases/ (each module default-exports `async () => void` and prints its own
 * lines through the harness). `npm run bench -- engine` runs only the cases whose file name contains "engine".
 */
import { readdirSync } from 'node:fs'
import { dirname, join } from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

const here = dirname(fileURLToPath(import.meta.url))
const filters = process.argv.slice(2)

async function main(): Promise<void> {
  const files = readdirSync(join(here, 'cases'))
    .filter((f) => /\.ts$/.test(f) && !f.endsWith('.d.ts'))
    .filter((f) => filters.length === 0 || filters.some((x) => f.includes(x)))
    .sort()
  let failed = 0
  for (const file of files) {
    const mod = (await import(pathToFileURL(join(here, 'cases', file)).href)) as { default?: () => Promise<unknown> }
    if (typeof mod.default !== 'function') {
      console.error(`bench ${file}: no default export to run`)
      failed++
      continue
    }
    try {
      await mod.default()
    } catch (err) {
      console.error(`bench ${file}: failed: ${(err as Error).stack ?? err}`)
      failed++
    }
  }
  if (failed) process.exitCode = 1
}

await main()
