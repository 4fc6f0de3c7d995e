import { defineConfig } from 'drizzle-kit'

/** The embedded default: SQLite migrations. drizzle.pg.config.ts generates the same schema for PostgreSQL. */
export default defineConfig({
  dialect: 'sqlite',
  schema: './server/db/schema.ts',
  out: './drizzle/sqlite',
})
