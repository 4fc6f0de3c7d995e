import { defineConfig } from 'drizzle-kit'

/** The scale-out configuration (DATABASE_URL=postgres://…): PostgreSQL migrations of server/db/schema.pg.ts. */
export default defineConfig({
  dialect: 'postgresql',
  schema: './server/db/schema.pg.ts',
  out: './drizzle/pg',
})
