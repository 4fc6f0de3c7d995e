import { describe, expect, it } from 'vitest'
import { mentionToken, snapshotPath, threadsOf } from '../../../src/lib/reviewModel'
import type { Comment } from '../../../shared/schema/api'

function comment(id: string, cellId: string, createdAt: number, parentId: string | null = null): Comment {
  return { id, sheetId: 's1', cellId, snapshotId: null, snapshotHash: null, parentId, text: id, authorId: 'u', authorName: 'U', resolved: false, createdAt, updatedAt: createdAt }
}

describe('threadsOf(comments, cellId)', () => {
  it('groups replies under their first comment, oldest first, and keeps other cells out', () => {
    const list = [comment('r2', 'a', 40, 't1'), comment('t2', 'a', 30), comment('t1', 'a', 10), comment('r1', 'a', 20, 't1'), comment('x', 'b', 5)]
    const threads = threadsOf(list, 'a')
    expect(threads.map((t) => t.root.id)).toEqual(['t1', 't2'])
    expect(threads[0]!.replies.map((r) => r.id)).toEqual(['r1', 'r2'])
    expect(threads[1]!.replies).toEqual([])
  })

  it('starts a thread of its own for a reply whose first comment is not in the list', () => {
    const threads = threadsOf([comment('r1', 'a', 20, 'gone')], 'a')
    expect(threads.map((t) => t.root.id)).toEqual(['r1'])
  })
})

describe('snapshotPath(sheetId, snapshotId, compareWith?)', () => {
  it('builds the snapshot page and its compare page, encoding each segment', () => {
    expect(snapshotPath('s 1', 'n/2')).toBe('/sheets/s%201/snapshots/n%2F2')
    expect(snapshotPath('s1', 'n2', 'live')).toBe('/sheets/s1/snapshots/n2/compare/live')
  })
})

describe('mentionToken(name)', () => {
  it('writes a member name without its spaces, as the server matches @mentions', () => {
    expect(mentionToken(' Anil  Varma ')).toBe('AnilVarma')
  })
})
