// The core's purity rule as lint: shared/ may not import Vue, Express, ws, Drizzle or node:*, nor touch DOM globals;
// the same lines are fine in the client and the server. Server, test and bench code may not leave a promise unawaited.
import { describe, expect, it } from 'vitest'
import { ESLint } from 'eslint'
import { join } from 'node:path'

const root = join(__dirname, '../..')
const eslint = new ESLint({ cwd: root })

async function problems(file: string, text: string): Promise<string[]> {
  const [result] = await eslint.lintText(text, { filePath: join(root, file) })
  return result.messages.map((m) => `${m.ruleId}: ${m.message}`)
}

describe('lint of shared/', () => {
  it.each([
    ["import { ref } from 'vue'\nexport const r = ref(1)\n", /no-restricted-imports: 'vue' import is restricted/],
    ["import express from 'express'\nexport const e = express\n", /'express' import is restricted/],
    ["import { WebSocket } from 'ws'\nexport const w = WebSocket\n", /'ws' import is restricted/],
    ["import { eq } from 'drizzle-orm'\nexport const q = eq\n", /'drizzle-orm' import is restricted/],
    ["import { readFileSync } from 'node:fs'\nexport const f = readFileSync\n", /no Node built-ins/],
    ['export const t = () => document.title\n', /no-restricted-globals: Unexpected use of 'document'/],
    ['export const w = () => window.innerWidth\n', /Unexpected use of 'window'/],
  ])('refuses %j', async (text, expected) => {
    expect((await problems('shared/engine/probe.ts', text)).join('\n')).toMatch(expected)
  }, 60_000)

  it('allows the same imports outside shared/, and pure code inside it', async () => {
    expect(await problems('server/index.ts', "import express from 'express'\nexport const e = express\n")).toEqual([])
    expect(await problems('shared/engine/probe.ts', "import { z } from 'zod'\nexport const s = z.string()\n")).toEqual([])
  }, 60_000)
})

describe('lint of server, tests and bench code', () => {
  // A file of the tree, so the type-aware rule has its project (the text linted is the one given here).
  it('refuses a promise nobody awaits, and accepts it awaited or marked with void', async () => {
    const floating = "export async function later(): Promise<void> {}\nlater()\n"
    expect((await problems('tests/collab/redisBus.test.ts', floating)).join('\n')).toMatch(/no-floating-promises: Promises must be awaited/)
    expect(await problems('server/index.ts', 'export async function later(): Promise<void> {}\nvoid later()\nawait later()\n')).toEqual([])
  }, 60_000)
})
