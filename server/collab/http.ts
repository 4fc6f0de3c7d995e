/** Refusing an upgrade: a plain HTTP response written on the raw socket, then the socket is closed. */
import type { Duplex } from 'node:stream'
import { STATUS_CODES } from 'node:http'

export function rejectUpgrade(socket: Duplex, status: number, message: string, extraHeaders: Record<string, string> = {}): void {
  if (socket.destroyed) return
  const body = JSON.stringify({ error: message })
  const headers = {
    Connection: 'close',
    'Content-Type': 'application/json; charset=utf-8',
    'Content-Length': String(Buffer.byteLength(body)),
    'Cache-Control': 'no-store',
    ...extraHeaders,
  }
  const head = `HTTP/1.1 ${status} ${STATUS_CODES[status] ?? 'Error'}\r\n${Object.entries(headers)
    .map(([k, v]) => `${k}: ${v}`)
    .join('\r\n')}\r\n\r\n`
  socket.once('finish', () => socket.destroy())
  socket.end(head + body)
}
