/**
 * The developer mailbox (only when NODE_ENV !== 'production'): what the local fake SMTP server received, as an HTML
 * page at /dev/mail and as JSON at /dev/mail.json. With a real SMTP transport it lists the outgoing mail log.
 */
import { Router, type Request } from 'express'
import { forbidden } from '../errors'
import { desc } from 'drizzle-orm'
import path from 'node:path'
import { existsSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import type { AppDeps } from '../deps'
import { mails } from '../db/tables'
import { escapeHtml } from '../mail/messages'
import { linksIn } from '../mail/mime'
import type { DevMail } from '../../shared/schema/api'

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..')
/** A Map, not an object: a request for `constructor` or `__proto__` must find nothing. */
const FONTS = new Map<string, string>([
  ['fira-sans-400.woff2', 'node_modules/@fontsource/fira-sans/files/fira-sans-latin-400-normal.woff2'],
  ['fira-sans-600.woff2', 'node_modules/@fontsource/fira-sans/files/fira-sans-latin-600-normal.woff2'],
  ['fira-mono-400.woff2', 'node_modules/@fontsource/fira-mono/files/fira-mono-latin-400-normal.woff2'],
])

export async function devMessages(deps: AppDeps): Promise<DevMail[]> {
  if (deps.mailer.inbox) return deps.mailer.inbox()
  const rows = await deps.db.select().from(mails).orderBy(desc(mails.createdAt)).limit(200)
  return rows.map((m) => ({ id: m.id, from: deps.config.mailFrom, to: [m.to], subject: m.subject, receivedAt: m.sentAt ?? m.createdAt, text: m.text, html: m.html, links: linksIn(m.text) }))
}

function page(messages: DevMail[]): string {
  const items = messages
    .map((m) => {
      const links = m.links.map((l) => `<li><a href="${escapeHtml(l)}">${escapeHtml(l)}</a></li>`).join('')
      return `<article class="mail">
  <header><h2>${escapeHtml(m.subject || '(no subject)')}</h2>
  <p class="meta">to <strong>${escapeHtml(m.to.join(', '))}</strong> · from ${escapeHtml(m.from)} · <time datetime="${new Date(m.receivedAt).toISOString()}">${escapeHtml(new Date(m.receivedAt).toLocaleString('en-GB'))}</time></p></header>
  ${links ? `<ul class="links">${links}</ul>` : ''}
  <details><summary>Plain text</summary><pre>${escapeHtml(m.text)}</pre></details>
  ${m.html ? `<details><summary>As sent (HTML)</summary><iframe sandbox title="HTML part of ${escapeHtml(m.subject)}" srcdoc="${escapeHtml(m.html)}"></iframe></details>` : ''}
</article>`
    })
    .join('\n')
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Developer mailbox · Penumbra</title>
<style>
@font-face { font-family: 'Fira Sans'; font-weight: 400; src: url(/dev/fonts/fira-sans-400.woff2) format('woff2'); }
@font-face { font-family: 'Fira Sans'; font-weight: 600; src: url(/dev/fonts/fira-sans-600.woff2) format('woff2'); }
@font-face { font-family: 'Fira Mono'; font-weight: 400; src: url(/dev/fonts/fira-mono-400.woff2) format('woff2'); }
:root { --paper: #f6f3ec; --surface: #fffdf9; --night: #15223f; --accent: #a9521a; --ink: #1c2331; --muted: #5b6474; --line: #e2ddd2; }
* { box-sizing: border-box; }
body { margin: 0; background: var(--paper); color: var(--ink); font: 15px/1.5 'Fira Sans', system-ui, -apple-system, 'Segoe UI', sans-serif; }
.strip { height: 4px; background: linear-gradient(90deg, #7a00c8, #2e3cff, #00b4ff, #00d060, #e8e800, #ff9a00, #ff2200, #a00000); }
.bar { background: var(--night); color: var(--paper); padding: 12px 20px; display: flex; gap: 16px; align-items: baseline; flex-wrap: wrap; }
.bar strong { letter-spacing: .04em; }
.bar a { color: var(--paper); }
main { max-width: 880px; margin: 0 auto; padding: 20px 16px 48px; }
.note { color: var(--muted); margin: 0 0 16px; }
.mail { background: var(--surface); border: 1px solid var(--line); border-radius: 8px; padding: 14px 18px; margin: 0 0 14px; }
.mail h2 { font-size: 17px; font-weight: 600; margin: 0; }
.meta { color: var(--muted); margin: 2px 0 8px; font-size: 13px; }
.links { margin: 6px 0 10px; padding-left: 20px; }
.links a { color: var(--accent); font-family: 'Fira Mono', ui-monospace, monospace; font-size: 13px; word-break: break-all; }
summary { cursor: pointer; color: var(--muted); font-size: 13px; }
pre { white-space: pre-wrap; font-family: 'Fira Mono', ui-monospace, monospace; font-size: 13px; background: var(--paper); padding: 10px; border-radius: 6px; }
iframe { width: 100%; height: 420px; border: 1px solid var(--line); border-radius: 6px; background: #fff; }
.empty { color: var(--muted); }
</style></head>
<body><div class="strip"></div>
<div class="bar"><strong>Penumbra</strong><span>Developer mailbox</span><a href="/dev/mail.json">as JSON</a><a href="/">back to the app</a></div>
<main>
<p class="note">Mail sent while developing lands here instead of in anyone’s inbox. This page does not exist in production.</p>
${items || '<p class="empty">No mail yet. Invite someone or ask for a password reset, then reload.</p>'}
</main></body></html>`
}

/** True for a request from this machine (req.ip follows TRUST_PROXY, so a proxy's forwarded address counts). */
export function fromLoopback(req: Request): boolean {
  const ip = req.ip ?? req.socket.remoteAddress ?? ''
  return ip === '::1' || ip.startsWith('127.') || ip.startsWith('::ffff:127.')
}

/**
 * The mailbox holds every account's sign-up, reset and invitation links, so it answers in full only on this machine;
 * from elsewhere a signed-in person sees the messages sent to their own address, and nobody else anything.
 */
async function visibleMessages(deps: AppDeps, req: Request): Promise<DevMail[]> {
  if (fromLoopback(req)) return devMessages(deps)
  if (!req.user) throw forbidden('The developer mailbox answers only on this machine (or, signed in, shows your own mail).')
  const own = req.user.email.toLowerCase()
  return (await devMessages(deps)).filter((m) => m.to.some((to) => to.toLowerCase() === own))
}

export function devMailRoutes(deps: AppDeps): Router {
  const r = Router()
  r.get('/mail.json', async (req, res) => {
    const messages = await visibleMessages(deps, req)
    res.set('Cache-Control', 'no-store').json({ messages })
  })
  r.get('/mail', async (req, res) => {
    // read first: a refusal must not go out labelled as HTML
    const messages = await visibleMessages(deps, req)
    res.set('Cache-Control', 'no-store').type('html').send(page(messages))
  })
  r.get('/fonts/:file', (req, res, next) => {
    const rel = FONTS.get(String(req.params.file))
    const file = rel && path.join(ROOT, rel)
    if (!file || !existsSync(file)) return next()
    res.sendFile(file, { maxAge: '1d' })
  })
  return r
}
