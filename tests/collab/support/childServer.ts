/**
 * A collaboration server in its own process, for kill -9 trials: opens the database file in COLLAB_DB, listens on
 * 127.0.0.1:COLLAB_PORT (0 = any), compacts every COLLAB_COMPACT_EVERY rows when set, and prints `listening <port>` once
 * ready. It installs no signal handlers: SIGKILL
 * is the point.
 */
import http from 'node:http'
import type { AddressInfo } from 'node:net'
import { openDb } from '../../../server/db/client'
import { createCollab } from '../../../server/collab/index'
import { SECRET } from './fixture'

const file = process.env.COLLAB_DB
if (!file) {
  console.error('COLLAB_DB is not set')
  process.exit(2)
}
const handle = openDb(file)
const collab = createCollab({
  db: handle.db,
  secret: SECRET,
  // Durability is under test here, not the rate limit: the writer types as fast as the loop allows.
  rateLimit: { messagesPerSecond: 1e6, messageBurst: 1e6 },
  // COLLAB_COMPACT_EVERY: compact this often, so a kill can land during or between compactions.
  ...(process.env.COLLAB_COMPACT_EVERY ? { compactEvery: Number(process.env.COLLAB_COMPACT_EVERY) } : {}),
  log: (m) => console.error(m),
})
const server = http.createServer((_req, res) => res.writeHead(404).end())
server.on('upgrade', (req, socket, head) => void collab.handleUpgrade(req, socket, head))
server.listen(Number(process.env.COLLAB_PORT ?? 0), '127.0.0.1', () => {
  process.stdout.write(`listening ${(server.address() as AddressInfo).port}\n`)
})
