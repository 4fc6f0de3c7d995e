// `npm run test:scale` runs the API and collaboration tests against PostgreSQL and Redis: it refuses to start
// without both addresses, rather than quietly testing the embedded configuration again.
const missing = ['DATABASE_URL', 'REDIS_URL'].filter((name) => !process.env[name])
if (missing.length > 0) {
  console.error(
    `test:scale needs ${missing.join(' and ')} (PostgreSQL and Redis for the scale-out configuration).\n` +
      'Start a throwaway pair with:  eval "$(bash scripts/scale-services.sh start /tmp/penumbra-scale)"\n' +
      'then run npm run test:scale again; `npm test` covers the embedded SQLite configuration.',
  )
  process.exit(1)
}
if (!/^postgres(ql)?:\/\//i.test(process.env.DATABASE_URL)) {
  console.error('test:scale: DATABASE_URL must be a postgres:// address')
  process.exit(1)
}
