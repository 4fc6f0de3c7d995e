/**
 * The sheet document's shape, checked on a writer's update before it is applied (shared/doc/sheetDoc.ts):
 *   cells  a Y.Array of Y.Map only, each with `id`, `kind` (a known one) and the fields of that kind's schema
 *          (shared/schema/sheet.ts), each of its type; a formula's `source` and a note's `text` are Y.Text; ids unique
 *   meta   `title`, a string
 * and nothing else anywhere. A cell's `id` and `kind` never change once set, and a required field is never removed.
 *
 * The check reads the update's own structs (already parsed by Y.decodeUpdate) and looks up, in the live document,
 * only the items they attach to: its cost follows the size of the update, not of the document. (Applying each update
 * to a scratch copy of the document and checking the copy costs a copy of the whole document per keystroke: see
 * DEVELOPERS.md, "Document shape check", for both measured.)
 */
import * as Y from 'yjs'
import { cellsOf, isTextField, metaOf } from '../../shared/doc/sheetDoc'
import { CELL_SCHEMAS, REQUIRED_FIELDS, keepsUnknownFields } from '../../shared/schema/sheet'

type Decoded = ReturnType<typeof Y.decodeUpdate>
type DeleteSet = Decoded['ds']

/** A cell the update creates: its array item and the field items it brings. */
interface FreshCell {
  item: Y.Item
  fields: Map<string, Y.Item[]>
}

/** Where an item of the update lands. */
type Place =
  | { at: 'cells' }
  | { at: 'meta'; key: string | null }
  | { at: 'cell'; fresh: FreshCell | null; map: Y.Map<unknown> | null; key: string | null }
  | { at: 'text' }
  | { at: 'bad'; why: string }

class ShapeError extends Error {}

/** What a content holds, in words, for messages. */
function contentNoun(content: unknown): string {
  if (content instanceof Y.ContentAny) {
    const v = content.arr[0]
    return v === null ? 'null' : Array.isArray(v) ? 'a list' : typeof v === 'object' ? 'a plain object' : `a ${typeof v}`
  }
  if (content instanceof Y.ContentString) return 'text'
  if (content instanceof Y.ContentType) return content.type instanceof Y.Text ? 'a text' : content.type instanceof Y.Array ? 'a list' : 'a map'
  if (content instanceof Y.ContentBinary) return 'binary data'
  if (content instanceof Y.ContentDoc) return 'a sub-document'
  return 'unsupported content'
}

function isDeletedContent(content: unknown): boolean {
  return content instanceof Y.ContentDeleted
}

function inDeleteSet(ds: DeleteSet, id: Y.ID): boolean {
  const ranges = ds.clients.get(id.client)
  if (!ranges) return false
  for (const r of ranges) if (id.clock >= r.clock && id.clock < r.clock + r.len) return true
  return false
}

/**
 * Checks a decoded update against the live document `doc` (not yet applied). Returns the problem in a sentence, or
 * null when the update keeps the document's shape.
 */
export function checkShape(doc: Y.Doc, decoded: Decoded): string | null {
  try {
    new ShapeCheck(doc, decoded).run()
    return null
  } catch (err) {
    if (err instanceof ShapeError) return err.message
    throw err
  }
}

class ShapeCheck {
  private readonly cells: Y.AbstractType<unknown>
  private readonly meta: Y.Map<unknown>
  private readonly store: Y.Doc['store']
  /** The update's items by client, in clock order (as decoded). */
  private readonly byClient = new Map<number, Y.Item[]>()
  private readonly places = new Map<Y.Item, Place>()
  private readonly fresh = new Map<Y.Item, FreshCell>()
  /** Field items the update sets on cells that are already in the document. */
  private readonly existingFields = new Map<Y.Map<unknown>, Map<string, Y.Item[]>>()

  constructor(
    doc: Y.Doc,
    private readonly decoded: Decoded,
  ) {
    this.cells = cellsOf(doc) as Y.AbstractType<unknown>
    this.meta = metaOf(doc)
    this.store = doc.store
  }

  run(): void {
    const items: Y.Item[] = []
    for (const struct of this.decoded.structs) {
      if (!(struct instanceof Y.Item)) continue
      let list = this.byClient.get(struct.id.client)
      if (!list) this.byClient.set(struct.id.client, (list = []))
      list.push(struct)
      // already integrated (a resent change): Yjs skips it, so do we
      if (struct.id.clock + struct.length <= Y.getState(this.store, struct.id.client)) continue
      items.push(struct)
    }
    for (const item of items) this.admit(item)
    for (const cell of this.fresh.values()) this.checkFreshCell(cell)
    for (const [map, fields] of this.existingFields) this.checkExistingCell(map, fields)
    if (this.fresh.size > 0) this.checkUniqueIds()
    this.checkDeletions()
  }

  private admit(item: Y.Item): void {
    const place = this.placeOf(item)
    const content = item.content
    switch (place.at) {
      case 'bad':
        throw new ShapeError(place.why)
      case 'cells':
        if (isDeletedContent(content)) return
        if (!(content instanceof Y.ContentType) || content.type.constructor !== Y.Map)
          throw new ShapeError(`the cells list may hold only cells; this update puts ${contentNoun(content)} there`)
        if (!this.fresh.has(item)) this.fresh.set(item, { item, fields: new Map() })
        return
      case 'meta':
        if (place.key !== 'title') throw new ShapeError(`the sheet's details hold only its title, not "${place.key ?? '(a list entry)'}"`)
        if (isDeletedContent(content)) return
        if (!(content instanceof Y.ContentAny) || content.arr.length !== 1 || typeof content.arr[0] !== 'string' || content.arr[0].length > 200)
          throw new ShapeError('the sheet title must be text of at most 200 characters')
        return
      case 'text':
        if (content instanceof Y.ContentString || content instanceof Y.ContentFormat || isDeletedContent(content)) return
        throw new ShapeError(`a formula or note text may hold only characters, not ${contentNoun(content)}`)
      case 'cell': {
        if (place.key === null) throw new ShapeError('a cell holds named fields only, not list entries')
        const fields = place.fresh ? place.fresh.fields : this.fieldsOfExisting(place.map!)
        let list = fields.get(place.key)
        if (!list) fields.set(place.key, (list = []))
        list.push(item)
        return
      }
    }
  }

  private fieldsOfExisting(map: Y.Map<unknown>): Map<string, Y.Item[]> {
    let fields = this.existingFields.get(map)
    if (!fields) this.existingFields.set(map, (fields = new Map()))
    return fields
  }

  /** The update's own item holding `id`, if any. */
  private updateItem(id: Y.ID): Y.Item | undefined {
    const list = this.byClient.get(id.client)
    if (!list) return undefined
    let lo = 0
    let hi = list.length - 1
    while (lo <= hi) {
      const mid = (lo + hi) >> 1
      const s = list[mid]
      if (id.clock < s.id.clock) hi = mid - 1
      else if (id.clock >= s.id.clock + s.length) lo = mid + 1
      else return s
    }
    return undefined
  }

  /** The document's item holding `id`, if the document has it. */
  private docItem(id: Y.ID): Y.Item | null {
    if (id.clock >= Y.getState(this.store, id.client)) return null
    const struct = Y.getItem(this.store, id)
    return struct instanceof Y.Item ? struct : null
  }

  private placeOf(item: Y.Item): Place {
    let place = this.places.get(item)
    if (place) return place
    // mark first: a cycle of origins in a hostile update ends here instead of recursing for ever
    this.places.set(item, { at: 'bad', why: 'the update refers to itself in a loop' })
    place = this.resolve(item)
    this.places.set(item, place)
    return place
  }

  private resolve(item: Y.Item): Place {
    const parent = item.parent as Y.ID | string | null
    if (typeof parent === 'string') {
      if (parent === 'cells') return item.parentSub === null ? { at: 'cells' } : { at: 'bad', why: 'the cells list holds no named entries' }
      if (parent === 'meta') return { at: 'meta', key: item.parentSub }
      return { at: 'bad', why: `the sheet document has no part named "${parent.slice(0, 40)}"` }
    }
    if (parent instanceof Y.ID) return this.inside(parent, item.parentSub)
    // no parent written: it is the parent of the item it was inserted next to
    const next = item.origin ?? item.rightOrigin
    if (!next) return { at: 'bad', why: 'an inserted item names neither its place nor a neighbour' }
    const own = this.updateItem(next)
    if (own && own !== item) return this.placeOf(own)
    const known = this.docItem(next)
    if (!known) return { at: 'bad', why: 'the update builds on changes this server does not have; reload the sheet' }
    return this.placeOfType(known.parent as Y.AbstractType<unknown>, known.parentSub)
  }

  /** The place of an item whose parent type is the one created by the item `typeId`. */
  private inside(typeId: Y.ID, key: string | null): Place {
    const own = this.updateItem(typeId)
    if (own) {
      if (!(own.content instanceof Y.ContentType)) return { at: 'bad', why: 'an item is placed inside something that is not a map or text' }
      const outer = this.placeOf(own)
      const type = own.content.type
      if (outer.at === 'cells' && type.constructor === Y.Map) {
        let cell = this.fresh.get(own)
        if (!cell) this.fresh.set(own, (cell = { item: own, fields: new Map() }))
        return { at: 'cell', fresh: cell, map: null, key }
      }
      if (outer.at === 'cell' && type instanceof Y.Text && !(type instanceof Y.XmlText)) return { at: 'text' }
      return { at: 'bad', why: 'the update nests content where the sheet document has none' }
    }
    const known = this.docItem(typeId)
    if (!known) return { at: 'bad', why: 'the update builds on changes this server does not have; reload the sheet' }
    if (!(known.content instanceof Y.ContentType)) return { at: 'bad', why: 'an item is placed inside something that is not a map or text' }
    return this.placeOfType(known.content.type, key)
  }

  private placeOfType(type: Y.AbstractType<unknown>, key: string | null): Place {
    if (type === this.cells) return key === null ? { at: 'cells' } : { at: 'bad', why: 'the cells list holds no named entries' }
    if (type === this.meta) return { at: 'meta', key }
    if (type.constructor === Y.Map && (type as Y.AbstractType<unknown>)._item?.parent === this.cells) return { at: 'cell', fresh: null, map: type as Y.Map<unknown>, key }
    if (type instanceof Y.Text && !(type instanceof Y.XmlText)) return { at: 'text' }
    return { at: 'bad', why: 'the update nests content where the sheet document has none' }
  }

  /** The value a field's items leave (the last one not deleted in the same update), or undefined. */
  private lastLive(items: Y.Item[]): Y.Item | undefined {
    for (let i = items.length - 1; i >= 0; i--)
      if (!isDeletedContent(items[i].content) && !inDeleteSet(this.decoded.ds, items[i].id)) return items[i]
    return undefined
  }

  private checkFreshCell(cell: FreshCell): void {
    if (isDeletedContent(cell.item.content) || inDeleteSet(this.decoded.ds, cell.item.id)) return
    const kindItem = this.lastLive(cell.fields.get('kind') ?? [])
    const kind = kindItem && kindItem.content instanceof Y.ContentAny ? kindItem.content.arr[0] : undefined
    if (typeof kind !== 'string' || !CELL_SCHEMAS.has(kind))
      throw new ShapeError(`a new cell needs a known kind (${[...CELL_SCHEMAS.keys()].join(', ')}), not ${kind === undefined ? 'none' : JSON.stringify(kind).slice(0, 40)}`)
    for (const field of REQUIRED_FIELDS.get(kind)!)
      if (!this.lastLive(cell.fields.get(field) ?? [])) throw new ShapeError(`a new ${kind} cell lacks its ${field}`)
    for (const [key, items] of cell.fields) for (const item of items) this.checkField(kind, key, item)
  }

  private checkExistingCell(map: Y.Map<unknown>, fields: Map<string, Y.Item[]>): void {
    const kind = map.get('kind')
    for (const [key, items] of fields) {
      if ((key === 'id' || key === 'kind') && map.has(key)) throw new ShapeError(`a cell's ${key} cannot change`)
      if (typeof kind === 'string' && CELL_SCHEMAS.has(kind)) for (const item of items) this.checkField(kind, key, item)
      else throw new ShapeError('this cell is not valid; delete it and add it again')
    }
  }

  private checkField(kind: string, key: string, item: Y.Item): void {
    const content = item.content
    if (isDeletedContent(content)) return
    const schema = CELL_SCHEMAS.get(kind)!
    const shape = schema.shape as Record<string, { safeParse(v: unknown): { success: boolean } }>
    const field = Object.hasOwn(shape, key) ? shape[key] : undefined
    if (!field && !keepsUnknownFields(schema)) throw new ShapeError(`"${key.slice(0, 40)}" is not a field of a ${kind} cell`)
    if (isTextField(kind, key) && content instanceof Y.ContentType && content.type instanceof Y.Text && !(content.type instanceof Y.XmlText)) return
    if (!(content instanceof Y.ContentAny) || content.arr.length !== 1)
      throw new ShapeError(`the ${key} of a ${kind} cell cannot be ${contentNoun(content)}`)
    if (field && !field.safeParse(content.arr[0]).success)
      throw new ShapeError(`the ${key} of a ${kind} cell cannot be ${contentNoun(content)}${typeof content.arr[0] === 'string' || typeof content.arr[0] === 'number' ? ` (${JSON.stringify(content.arr[0]).slice(0, 30)})` : ''}`)
  }

  /** New cells' ids differ from each other and from every cell that stays in the document. */
  private checkUniqueIds(): void {
    const live = new Set<unknown>()
    for (const entry of (this.cells as Y.Array<unknown>).toArray()) {
      if (!(entry instanceof Y.Map) || !entry._item || inDeleteSet(this.decoded.ds, entry._item.id)) continue
      live.add(entry.get('id'))
    }
    for (const cell of this.fresh.values()) {
      if (isDeletedContent(cell.item.content) || inDeleteSet(this.decoded.ds, cell.item.id)) continue
      const idItem = this.lastLive(cell.fields.get('id') ?? [])
      const id = idItem && idItem.content instanceof Y.ContentAny ? idItem.content.arr[0] : undefined
      if (live.has(id)) throw new ShapeError(`a new cell reuses the id ${JSON.stringify(id).slice(0, 70)} of another cell`)
      live.add(id)
    }
  }

  /** Deleting may not strip a remaining cell of a field it needs (its id, kind or a required field). */
  private checkDeletions(): void {
    for (const [client, ranges] of this.decoded.ds.clients) {
      const structs = this.store.clients.get(client)
      if (!structs) continue
      const known = Y.getState(this.store, client)
      for (const range of ranges) {
        const end = Math.min(range.clock + range.len, known)
        if (range.clock >= end) continue
        for (let i = Y.findIndexSS(structs, range.clock); i < structs.length && structs[i].id.clock < end; i++) {
          const item = structs[i]
          if (!(item instanceof Y.Item) || item.deleted || item.parentSub === null) continue
          const map = item.parent as Y.AbstractType<unknown>
          const mapItem = map._item
          if (map.constructor !== Y.Map || !mapItem || mapItem.parent !== this.cells || mapItem.deleted || inDeleteSet(this.decoded.ds, mapItem.id)) continue
          const key = item.parentSub
          if ((map as Y.Map<unknown>)._map.get(key) !== item) continue
          const kind = (map as Y.Map<unknown>).get('kind')
          const required = typeof kind === 'string' ? REQUIRED_FIELDS.get(kind) : undefined
          if (!required?.has(key) && key !== 'id' && key !== 'kind') continue
          const replaced = this.existingFields.get(map as Y.Map<unknown>)?.get(key)
          if (replaced && this.lastLive(replaced)) continue
          throw new ShapeError(`a cell's ${key} cannot be removed`)
        }
      }
    }
  }
}
