/**
 * The demo seed: the fictional Halvorsen Thin-Film Lab with its four demo sign-ins, and one sheet per
 * examples/*.penumbra.json. Runs at start when the database has no users; `npm run seed` runs it on DATA_DIR.
 * Everyone and everything here is invented for the demo.
 */
import { readdirSync, readFileSync, existsSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'
import { count, eq } from 'drizzle-orm'
import type { Db } from './client'
import { labs, memberships, users, type Role } from './tables'
import type { AppConfig } from '../config'
import { createUser } from '../services/accounts'
import { createSheet } from '../services/sheets'
import { newId } from '../services/tokens'
import { parseSheetFileText, type SheetFile } from '../../shared/schema/sheet'
import { seedSnapshotDemo, type SnapshotSeed } from './seedSnapshots'
import { transact } from './transact'

export const DEMO_LAB_NAME = 'Halvorsen Thin-Film Lab'

export interface DemoAccount {
  role: Role
  name: string
  email: string
  password: string
}

/** The demo sign-ins (also in the README and used by the browser tests). */
export const DEMO_ACCOUNTS: readonly DemoAccount[] = [
  { role: 'owner', name: 'Mira Halvorsen', email: 'mira@halvorsen-lab.example', password: 'demo-owner-2026' },
  { role: 'editor', name: 'Tomás Reyes', email: 'tomas@halvorsen-lab.example', password: 'demo-editor-2026' },
  { role: 'reviewer', name: 'Anil Varma', email: 'anil@varma-group.example', password: 'demo-reviewer-2026' },
  { role: 'viewer', name: 'Lena Fischer', email: 'lena@halvorsen-lab.example', password: 'demo-viewer-2026' },
]

export const EXAMPLES_DIR = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../examples')

export async function isEmpty(db: Db): Promise<boolean> {
  return ((await db.select({ n: count() }).from(users))[0]?.n ?? 0) === 0
}

/** Every valid examples/*.penumbra.json; invalid ones are skipped with a warning naming each problem. */
export function readExamples(dir: string, warn: (m: string) => void): { file: string; sheet: SheetFile }[] {
  if (!existsSync(dir)) return []
  const out: { file: string; sheet: SheetFile }[] = []
  for (const name of readdirSync(dir).filter((f) => f.endsWith('.penumbra.json')).sort()) {
    const parsed = parseSheetFileText(readFileSync(path.join(dir, name), 'utf8'))
    if (parsed.ok) out.push({ file: name, sheet: parsed.value })
    else warn(`demo seed: skipping examples/${name}: ${parsed.issues.map((i) => `${i.path || '(file)'} ${i.message}`).join('; ')}`)
  }
  return out
}

export interface SeedResult {
  labId: string
  users: Record<Role, string>
  sheets: { id: string; title: string }[]
  /** The review story (snapshots, reviews, a comment thread, a guest link), when a secret was given. */
  review?: SnapshotSeed
}

/** Seeds the demo lab. Call only on an empty database (see `isEmpty`). */
export async function seedDemo(
  deps: { db: Db; config: Pick<AppConfig, 'argon2'> & Partial<Pick<AppConfig, 'evaluate' | 'publicUrl'>> },
  options: { examplesDir?: string; warn?: (m: string) => void; secret?: Uint8Array } = {},
): Promise<SeedResult> {
  const warn = options.warn ?? ((m: string) => console.warn(m))
  const ids = {} as Record<Role, string>
  for (const account of DEMO_ACCOUNTS) {
    const user = await createUser(deps, account)
    ids[account.role] = user.id
  }
  const labId = newId()
  const now = Date.now()
  await transact(deps.db, async (db) => {
    await db.insert(labs).values({ id: labId, name: DEMO_LAB_NAME, createdBy: ids.owner, createdAt: now })
    for (const account of DEMO_ACCOUNTS) await db.insert(memberships).values({ labId, userId: ids[account.role], role: account.role, createdAt: now })
  })
  const examples = readExamples(options.examplesDir ?? EXAMPLES_DIR, warn)
  if (examples.length === 0) warn('demo seed: no valid examples/*.penumbra.json found; the demo lab has no sheets')
  // the editor measured and modelled the film (the edge model); the owner wrote the rest
  const editorsExample = examples.find((e) => e.file === 'edge-model.penumbra.json') ?? examples[0]
  const sheets: { id: string; title: string; file: string }[] = []
  for (const example of examples) {
    const row = await createSheet(deps, labId, example === editorsExample ? ids.editor : ids.owner, example.sheet)
    sheets.push({ id: row.id, title: row.title, file: example.file })
  }
  const result: SeedResult = { labId, users: ids, sheets: sheets.map(({ id, title }) => ({ id, title })) }
  const bandEdge = sheets.find((s) => s.file === 'edge-model.penumbra.json')
  const { evaluate, publicUrl } = deps.config
  if (options.secret && bandEdge && evaluate && publicUrl) {
    const other = sheets.find((s) => s.file === 'thickness-study.penumbra.json')
    result.review = await seedSnapshotDemo({ db: deps.db, config: { evaluate, publicUrl } }, options.secret, { labId, users: ids, bandEdgeSheetId: bandEdge.id, otherSheetId: other?.id })
  }
  return result
}

/** Which demo accounts exist (to print them at start). */
export async function demoAccountsPresent(db: Db): Promise<DemoAccount[]> {
  const present: DemoAccount[] = []
  for (const a of DEMO_ACCOUNTS) if ((await db.select({ id: users.id }).from(users).where(eq(users.email, a.email))).length > 0) present.push(a)
  return present
}

export function formatDemoTable(accounts: readonly DemoAccount[]): string {
  const rows = [['role', 'name', 'e-mail', 'password'], ...accounts.map((a) => [a.role, a.name, a.email, a.password])]
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => [...r[c]].length)))
  const line = (r: string[]) => ('  ' + r.map((cell, c) => cell + ' '.repeat(widths[c] - [...cell].length)).join('  ')).trimEnd()
  return [line(rows[0]), '  ' + widths.map((w) => '-'.repeat(w)).join('  '), ...rows.slice(1).map(line)].join('\n')
}

// `npm run seed`: seed the database (PostgreSQL when DATABASE_URL names one, else DATA_DIR's SQLite) if it is empty
if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  const { openConfiguredDb } = await import('./client')
  const { defaultConfig } = await import('../config')
  const { mkdirSync } = await import('node:fs')
  const dataDir = path.resolve(process.env.DATA_DIR ?? 'data')
  mkdirSync(dataDir, { recursive: true })
  const handle = await openConfiguredDb(path.join(dataDir, 'penumbra.sqlite'))
  const where = handle.dialect === 'pg' ? 'PostgreSQL (DATABASE_URL)' : dataDir
  if (!(await isEmpty(handle.db))) console.log(`The database in ${where} already has accounts; nothing seeded.`)
  else {
    const { loadSecret } = await import('../secret')
    const { closeSharedEvaluator } = await import('../services/evaluation')
    const secret = loadSecret(dataDir, process.env.PENUMBRA_SECRET, (m) => console.warn(m))
    const result = await seedDemo({ db: handle.db, config: defaultConfig({ publicUrl: process.env.PUBLIC_URL ?? 'http://localhost:3000' }) }, { secret })
    closeSharedEvaluator()
    console.log(`Seeded "${DEMO_LAB_NAME}" with ${result.sheets.length} sheet(s) in ${where}:\n${formatDemoTable(DEMO_ACCOUNTS)}`)
    if (result.review) console.log(`Demo guest link: ${result.review.guestUrl}`)
  }
  await handle.close()
}
