// Frames relayed to one socket within one turn of the event loop leave in one write; a lone frame still leaves at the
// end of its turn; a socket closed meanwhile is skipped. A relayed message is framed once, as RFC 6455 §5.2 puts it on
// the wire, and the ws library's own frame reader takes it back whatever the length form.
import { describe, expect, it } from 'vitest'
import { Duplex } from 'node:stream'
import * as ws from 'ws'
import { holdUntilTurnEnds, wireFrame } from '../../server/collab/turnWrites'

/** A socket stand-in that records each write the stream hands to the transport (one entry per system call). */
function recordingSocket(): { socket: Duplex; writes: string[][] } {
  const writes: string[][] = []
  const socket = new Duplex({
    read() {},
    write(chunk: Buffer, _encoding, done) {
      writes.push([chunk.toString()])
      done()
    },
    writev(chunks: { chunk: Buffer }[], done) {
      writes.push(chunks.map((c) => c.chunk.toString()))
      done()
    },
  })
  return { socket, writes }
}

const endOfTurn = () => new Promise<void>((resolve) => setImmediate(resolve))

describe('collab: one write per socket per turn', () => {
  it('sends the frames of one turn to a socket in one write, in order, and nothing before the turn ends', async () => {
    const a = recordingSocket()
    const b = recordingSocket()
    for (const frame of ['u1', 'u2', 'u3']) {
      for (const { socket } of [a, b]) {
        holdUntilTurnEnds(socket)
        socket.write(frame)
      }
    }
    expect(a.writes).toEqual([])
    await endOfTurn()
    expect(a.writes).toEqual([['u1', 'u2', 'u3']])
    expect(b.writes).toEqual([['u1', 'u2', 'u3']])
    expect(a.socket.writableCorked).toBe(0)
  })

  it('sends a lone frame at the end of its own turn, and holds each later turn anew', async () => {
    const a = recordingSocket()
    holdUntilTurnEnds(a.socket)
    a.socket.write('first')
    await endOfTurn()
    expect(a.writes).toEqual([['first']])
    holdUntilTurnEnds(a.socket)
    a.socket.write('second')
    holdUntilTurnEnds(a.socket)
    a.socket.write('third')
    await endOfTurn()
    expect(a.writes).toEqual([['first'], ['second', 'third']])
    expect(a.socket.writableCorked).toBe(0)
  })

  it('leaves a socket destroyed during the turn alone and still releases the others', async () => {
    const gone = recordingSocket()
    const kept = recordingSocket()
    holdUntilTurnEnds(gone.socket)
    gone.socket.write('lost')
    holdUntilTurnEnds(kept.socket)
    kept.socket.write('kept')
    gone.socket.destroy()
    await endOfTurn()
    expect(gone.writes).toEqual([])
    expect(kept.writes).toEqual([['kept']])
  })
})

/** The ws library's frame reader, as a client uses it (it is part of ws's exports but not of its type definitions). */
interface FrameReader {
  write(chunk: Buffer): boolean
  on(event: 'message', listener: (data: Buffer, isBinary: boolean) => void): void
  on(event: 'error', listener: (err: Error) => void): void
}
const Receiver = (ws as unknown as { Receiver: new (options: { isServer: boolean; binaryType: string }) => FrameReader }).Receiver

describe('collab: a relayed message framed once', () => {
  // 0 and 125 bytes: the 7-bit length; 126 and 65,535: the 16-bit form; 65,536 and more: the 64-bit form.
  it.each([0, 1, 125, 126, 300, 65_535, 65_536, 70_001])('frames %i bytes so that the ws client reads them back unchanged', async (n) => {
    const payload = Uint8Array.from({ length: n }, (_, i) => (i * 31 + 7) & 0xff)
    const framed = wireFrame(payload)
    expect(framed[0]).toBe(0x82) // final fragment, binary
    expect(framed[1] & 0x80).toBe(0) // a server's frames are not masked
    const reader = new Receiver({ isServer: false, binaryType: 'nodebuffer' })
    const received = new Promise<{ data: Buffer; isBinary: boolean }>((resolve, reject) => {
      reader.on('message', (data, isBinary) => resolve({ data, isBinary }))
      reader.on('error', reject)
    })
    // in two pieces, as a socket may deliver it
    const cut = Math.floor(framed.length / 2)
    reader.write(framed.subarray(0, cut))
    reader.write(framed.subarray(cut))
    const { data, isBinary } = await received
    expect(isBinary).toBe(true)
    expect(Buffer.compare(data, Buffer.from(payload))).toBe(0)
  })

  it('frames a message once for all its receivers', () => {
    const payload = Uint8Array.of(0, 2, 5, 1, 2, 3)
    expect(wireFrame(payload)).toBe(wireFrame(payload))
    expect(wireFrame(Uint8Array.of(0, 2, 5, 1, 2, 3))).not.toBe(wireFrame(payload))
  })
})
