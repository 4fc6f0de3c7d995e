/**
 * The SQLite schema (server/db/schema.ts, the embedded default) and the PostgreSQL one (server/db/schema.pg.ts) must
 * describe the same tables: names, columns, value kinds, not-null, defaults, primary keys, unique constraints, indexes,
 * foreign keys and their actions. Services query either through one set of types (server/db/tables.ts), so a column
 * on one side only would break the other dialect at run time; this test catches it first.
 */
import { describe, expect, it } from 'vitest'
import { getTableConfig as sqliteConfig, SQLiteTable } from 'drizzle-orm/sqlite-core'
import { getTableConfig as pgConfig, PgTable } from 'drizzle-orm/pg-core'
import { getTableName, is } from 'drizzle-orm'
import * as sqliteSchema from '../../server/db/schema'
import * as pgSchema from '../../server/db/schema.pg'

/** A column as both dialects should agree on it. */
interface ColumnShape {
  kind: string
  notNull: boolean
  primary: boolean
  unique: boolean
  default: unknown
  enumValues: readonly string[] | null
}

interface TableShape {
  columns: Record<string, ColumnShape>
  primaryKeys: string[][]
  uniques: string[][]
  indexes: { name: string; columns: string[]; unique: boolean }[]
  foreignKeys: { columns: string[]; table: string; foreignColumns: string[]; onDelete: string; onUpdate: string }[]
}

type AnyColumn = { name: string; dataType: string; columnType: string; notNull: boolean; primary: boolean; isUnique: boolean; default: unknown; enumValues?: readonly string[]; getSQLType(): string }

/** The kind of value a column holds, named the same on both sides (integer-number and bigint-number are both 'number'). */
function kindOf(column: AnyColumn): string {
  const sqlType = column.getSQLType().toLowerCase()
  if (sqlType === 'blob' || sqlType === 'bytea') return 'bytes'
  if (column.dataType === 'boolean') return 'boolean'
  if (column.dataType === 'number') return 'number'
  if (column.dataType === 'string') return 'text'
  return `${column.dataType}:${sqlType}`
}

function columnShape(column: AnyColumn): ColumnShape {
  return {
    kind: kindOf(column),
    notNull: column.notNull,
    primary: column.primary,
    unique: column.isUnique,
    default: column.default ?? null,
    enumValues: column.enumValues?.length ? column.enumValues : null,
  }
}

const names = (cols: readonly { name: string }[]) => cols.map((c) => c.name)
const byKey = <T>(list: T[], key: (x: T) => string) => [...list].sort((a, b) => key(a).localeCompare(key(b)))

function shapeOf(config: ReturnType<typeof sqliteConfig> | ReturnType<typeof pgConfig>): TableShape {
  const columns: Record<string, ColumnShape> = {}
  for (const c of config.columns as unknown as AnyColumn[]) columns[c.name] = columnShape(c)
  return {
    columns,
    primaryKeys: config.primaryKeys.map((pk) => names(pk.columns)),
    uniques: byKey(config.uniqueConstraints.map((u) => names(u.columns)), (x) => x.join()),
    indexes: byKey(
      config.indexes.map((i) => ({
        name: i.config.name as string,
        columns: (i.config.columns as { name: string }[]).map((c) => c.name),
        unique: i.config.unique ?? false,
      })),
      (x) => x.name,
    ),
    foreignKeys: byKey(
      config.foreignKeys.map((fk) => {
        const ref = fk.reference()
        return {
          columns: names(ref.columns),
          table: getTableName(ref.foreignTable),
          foreignColumns: names(ref.foreignColumns),
          onDelete: fk.onDelete ?? 'no action',
          onUpdate: fk.onUpdate ?? 'no action',
        }
      }),
      (x) => x.columns.join(),
    ),
  }
}

/** Every table of a schema module, by its SQL name. */
function sqliteShapes(mod: Record<string, unknown> = sqliteSchema): Map<string, TableShape> {
  const out = new Map<string, TableShape>()
  for (const value of Object.values(mod)) if (is(value, SQLiteTable)) out.set(getTableName(value), shapeOf(sqliteConfig(value)))
  return out
}

function pgShapes(mod: Record<string, unknown> = pgSchema): Map<string, TableShape> {
  const out = new Map<string, TableShape>()
  for (const value of Object.values(mod)) if (is(value, PgTable)) out.set(getTableName(value), shapeOf(pgConfig(value)))
  return out
}

/** Where two schemas differ, one line per difference (empty when they agree). */
function schemaDifferences(a: Map<string, TableShape>, b: Map<string, TableShape>): string[] {
  const out: string[] = []
  for (const name of a.keys()) if (!b.has(name)) out.push(`table ${name}: only in SQLite`)
  for (const name of b.keys()) if (!a.has(name)) out.push(`table ${name}: only in PostgreSQL`)
  for (const [name, left] of a) {
    const right = b.get(name)
    if (!right) continue
    for (const col of Object.keys(left.columns)) if (!right.columns[col]) out.push(`${name}.${col}: only in SQLite`)
    for (const col of Object.keys(right.columns)) if (!left.columns[col]) out.push(`${name}.${col}: only in PostgreSQL`)
    for (const [col, shape] of Object.entries(left.columns)) {
      const other = right.columns[col]
      if (other && JSON.stringify(shape) !== JSON.stringify(other)) out.push(`${name}.${col}: SQLite ${JSON.stringify(shape)} vs PostgreSQL ${JSON.stringify(other)}`)
    }
    for (const part of ['primaryKeys', 'uniques', 'indexes', 'foreignKeys'] as const) {
      if (JSON.stringify(left[part]) !== JSON.stringify(right[part]))
        out.push(`${name} ${part}: SQLite ${JSON.stringify(left[part])} vs PostgreSQL ${JSON.stringify(right[part])}`)
    }
  }
  return out
}

describe('the SQLite and PostgreSQL schemas', () => {
  it('have the same tables, columns, keys, unique constraints, indexes and foreign keys', () => {
    const sqlite = sqliteShapes()
    const pg = pgShapes()
    expect(sqlite.size).toBe(17)
    expect([...pg.keys()].sort()).toEqual([...sqlite.keys()].sort())
    expect(schemaDifferences(sqlite, pg)).toEqual([])
  })

  it('spot checks: the update log is keyed by (sheet_id, seq), times are numbers, blobs are bytes, the flag is a boolean', () => {
    for (const shapes of [sqliteShapes(), pgShapes()]) {
      const updates = shapes.get('sheet_updates')!
      expect(updates.primaryKeys).toEqual([['sheet_id', 'seq']])
      expect(updates.columns.update.kind).toBe('bytes')
      expect(updates.foreignKeys).toEqual([{ columns: ['sheet_id'], table: 'sheets', foreignColumns: ['id'], onDelete: 'cascade', onUpdate: 'no action' }])
      expect(shapes.get('sheet_states')!.columns).toMatchObject({ sheet_id: { primary: true }, state: { kind: 'bytes' }, upto_seq: { kind: 'number' } })
      expect(shapes.get('comments')!.columns.resolved).toMatchObject({ kind: 'boolean', notNull: true, default: false })
      expect(shapes.get('users')!.columns.email.unique).toBe(true)
      expect(shapes.get('datasets')!.foreignKeys.map((f) => f.onDelete)).toEqual(['cascade', 'set null', 'set null'])
      expect(shapes.get('memberships')!.columns.role.enumValues).toEqual(['owner', 'editor', 'reviewer', 'viewer'])
    }
  })

  it('reports a column that only one side has, a changed delete rule and a missing index', () => {
    const sqlite = sqliteShapes()
    const pg = pgShapes()
    const sheets = pg.get('sheets')!
    const changed = new Map(pg)
    changed.set('sheets', {
      ...sheets,
      columns: { ...sheets.columns, archived_at: { ...sheets.columns.updated_at, notNull: false } },
      indexes: [],
      foreignKeys: sheets.foreignKeys.map((f) => ({ ...f, onDelete: f.table === 'labs' ? 'no action' : f.onDelete })),
    })
    const found = schemaDifferences(sqlite, changed)
    expect(found).toContain('sheets.archived_at: only in PostgreSQL')
    expect(found.some((line) => line.startsWith('sheets indexes:'))).toBe(true)
    expect(found.some((line) => line.startsWith('sheets foreignKeys:'))).toBe(true)
    expect(found).toHaveLength(3)
  })
})
