/**
 * The local fake SMTP server used in development and tests: listens on loopback only, accepts every message without
 * authentication or TLS, and keeps what it receives (newest last) for the developer mailbox.
 */
import { SMTPServer } from 'smtp-server'
import type { AddressInfo } from 'node:net'
import { randomUUID } from 'node:crypto'
import { linksIn, parseMail } from './mime'
import type { DevMail } from '../../shared/schema/api'

export interface FakeSmtp {
  host: string
  port: number
  /** Messages received so far, oldest first. */
  messages: DevMail[]
  close(): Promise<void>
}

/** Keeps at most this many messages (oldest dropped) so a long development session stays small. */
const KEEP = 500
/** Largest message accepted, bytes. */
const MAX_SIZE = 5 * 1024 * 1024

export async function startFakeSmtp(options: { port?: number } = {}): Promise<FakeSmtp> {
  const host = '127.0.0.1'
  const messages: DevMail[] = []
  const server = new SMTPServer({
    secure: false,
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    size: MAX_SIZE,
    banner: 'Penumbra local mail catcher',
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = []
      stream.on('data', (c: Buffer) => chunks.push(c))
      stream.on('end', () => {
        if ((stream as unknown as { sizeExceeded?: boolean }).sizeExceeded) {
          callback(Object.assign(new Error('Message is larger than the local mail catcher keeps'), { responseCode: 552 }))
          return
        }
        const parsed = parseMail(Buffer.concat(chunks).toString('latin1'))
        const envelopeTo = session.envelope.rcptTo.map((r) => r.address)
        messages.push({
          id: randomUUID(),
          from: parsed.from || (session.envelope.mailFrom ? session.envelope.mailFrom.address : ''),
          to: parsed.to.length > 0 ? parsed.to : envelopeTo,
          subject: parsed.subject,
          receivedAt: Date.now(),
          text: parsed.text,
          html: parsed.html,
          links: linksIn(parsed.text || parsed.html),
        })
        if (messages.length > KEEP) messages.splice(0, messages.length - KEEP)
        callback()
      })
    },
  })
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(options.port ?? 0, host, () => {
      server.off('error', reject)
      resolve()
    })
  })
  // keep running after a bad client: log and go on
  server.on('error', (err) => console.warn(`local mail catcher: ${err.message}`))
  const port = ((server as unknown as { server: { address(): AddressInfo } }).server.address()).port
  return {
    host,
    port,
    messages,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}
