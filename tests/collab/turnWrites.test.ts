// Frames relayed to one socket within one turn of the event loop leave in one write; a lone frame still leaves at the
// end of its turn; a socket closed meanwhile is skipped.
import { describe, expect, it } from 'vitest'
import { Duplex } from 'node:stream'
import { holdUntilTurnEnds } from '../../server/collab/turnWrites'

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
