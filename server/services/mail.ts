/**
 * Sends one mail: records it in the `mails` table first, then hands it to the transport in the background (so an
 * answer never waits on, or reveals anything through, mail delivery) and records when it was sent or why it failed.
 */
import { eq } from 'drizzle-orm'
import type { Db } from '../db/client'
import { mails } from '../db/tables'
import type { Mailer } from '../mail/mailer'
import type { MailContent } from '../mail/messages'
import { newId } from './tokens'

export type MailKind = 'invitation' | 'password-reset' | 'confirm-sign-up' | 'already-signed-up' | 'review-request' | 'review-decision' | 'mention'

export async function queueMail(deps: { db: Db; mailer: Mailer }, kind: MailKind, to: string, content: MailContent): Promise<string> {
  const id = newId()
  await deps.db.insert(mails).values({ id, to, kind, subject: content.subject, text: content.text, html: content.html, createdAt: Date.now() })
  let sending: Promise<void>
  try {
    sending = deps.mailer.send({ to, ...content })
  } catch (err) {
    sending = Promise.reject(err)
  }
  sending.then(
    () => record(deps.db, id, { sentAt: Date.now() }),
    (err: unknown) => {
      const message = err instanceof Error ? err.message : String(err)
      console.warn(`mail to ${to} (${kind}) failed: ${message}`)
      record(deps.db, id, { error: message.slice(0, 1000) })
    },
  )
  return id
}

function record(db: Db, id: string, values: { sentAt?: number; error?: string }): void {
  // the database may already be closed at shutdown; the mail itself went out
  const ignore = () => {}
  try {
    db.update(mails).set(values).where(eq(mails.id, id)).then(ignore, ignore)
  } catch {
    ignore()
  }
}
