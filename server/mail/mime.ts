/**
 * A small reader for the messages our own mailer sends (RFC 5322 headers, RFC 2045 multipart bodies with
 * quoted-printable or base64 parts, RFC 2047 encoded words). Enough for the developer mailbox, which shows the text
 * and HTML parts and the links of what the local SMTP fake received.
 */

export interface ParsedMail {
  headers: Map<string, string>
  subject: string
  from: string
  to: string[]
  messageId: string
  text: string
  html: string
}

interface Part {
  headers: Map<string, string>
  body: string
}

function splitPart(raw: string): Part {
  const normalised = raw.replace(/\r\n/g, '\n')
  const at = normalised.indexOf('\n\n')
  const head = at < 0 ? normalised : normalised.slice(0, at)
  const body = at < 0 ? '' : normalised.slice(at + 2)
  const headers = new Map<string, string>()
  // unfold continuation lines, then split "Name: value"
  for (const line of head.replace(/\n[ \t]+/g, ' ').split('\n')) {
    const colon = line.indexOf(':')
    if (colon <= 0) continue
    const name = line.slice(0, colon).trim().toLowerCase()
    if (!headers.has(name)) headers.set(name, line.slice(colon + 1).trim())
  }
  return { headers, body }
}

/** `text/plain; charset=utf-8; boundary="x"` → { type, params }. */
function parseContentType(value: string | undefined): { type: string; params: Record<string, string> } {
  if (!value) return { type: 'text/plain', params: {} }
  const [type, ...rest] = value.split(';')
  const params: Record<string, string> = {}
  for (const p of rest) {
    const eq = p.indexOf('=')
    if (eq < 0) continue
    params[p.slice(0, eq).trim().toLowerCase()] = p.slice(eq + 1).trim().replace(/^"(.*)"$/, '$1')
  }
  return { type: type.trim().toLowerCase(), params }
}

const utf8 = new TextDecoder('utf-8')

function bytesOfBinaryString(s: string): Uint8Array {
  const out = new Uint8Array(s.length)
  for (let i = 0; i < s.length; i++) out[i] = s.charCodeAt(i) & 0xff
  return out
}

export function decodeQuotedPrintable(body: string): string {
  const joined = body.replace(/=\r?\n/g, '')
  const binary = joined.replace(/=([0-9A-Fa-f]{2})/g, (_, hex: string) => String.fromCharCode(parseInt(hex, 16)))
  return utf8.decode(bytesOfBinaryString(binary))
}

function decodeBody(part: Part): string {
  const encoding = (part.headers.get('content-transfer-encoding') ?? '7bit').toLowerCase()
  if (encoding === 'quoted-printable') return decodeQuotedPrintable(part.body)
  if (encoding === 'base64') return Buffer.from(part.body.replace(/\s+/g, ''), 'base64').toString('utf8')
  return utf8.decode(bytesOfBinaryString(part.body))
}

/** RFC 2047: `=?UTF-8?Q?Tom=C3=A1s?=` and `=?UTF-8?B?…?=` inside a header value. */
export function decodeEncodedWords(value: string): string {
  return value
    .replace(/\?=\s+=\?/g, '?==?')
    .replace(/=\?([^?]+)\?([QqBb])\?([^?]*)\?=/g, (_, _charset: string, enc: string, text: string) => {
      if (enc.toUpperCase() === 'B') return Buffer.from(text, 'base64').toString('utf8')
      return decodeQuotedPrintable(text.replace(/_/g, ' '))
    })
}

function collect(part: Part, out: { text: string; html: string }): void {
  const { type, params } = parseContentType(part.headers.get('content-type'))
  if (type.startsWith('multipart/') && params.boundary) {
    const delimiter = `--${params.boundary}`
    const sections = part.body.split(delimiter).slice(1)
    for (const section of sections) {
      if (section.startsWith('--')) break
      collect(splitPart(section.replace(/^\r?\n/, '')), out)
    }
    return
  }
  const disposition = part.headers.get('content-disposition') ?? ''
  if (/attachment/i.test(disposition)) return
  if (type === 'text/plain' && !out.text) out.text = decodeBody(part).replace(/\n$/, '')
  else if (type === 'text/html' && !out.html) out.html = decodeBody(part).replace(/\n$/, '')
}

function addresses(value: string | undefined): string[] {
  if (!value) return []
  return decodeEncodedWords(value)
    .split(',')
    .map((a) => a.trim())
    .filter(Boolean)
}

export function parseMail(raw: string): ParsedMail {
  const root = splitPart(raw)
  const out = { text: '', html: '' }
  collect(root, out)
  return {
    headers: root.headers,
    subject: decodeEncodedWords(root.headers.get('subject') ?? ''),
    from: decodeEncodedWords(root.headers.get('from') ?? ''),
    to: addresses(root.headers.get('to')),
    messageId: root.headers.get('message-id') ?? '',
    text: out.text,
    html: out.html,
  }
}

/** Every http(s) link in a text, in order of appearance, without repeats. */
export function linksIn(text: string): string[] {
  const found = text.match(/https?:\/\/[^\s<>"')\]]+/g) ?? []
  return [...new Set(found.map((l) => l.replace(/[.,;:]+$/, '')))]
}
