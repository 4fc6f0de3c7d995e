/**
 * A sheet's first view, written into the page the server sends for `/sheets/:id` (for a member of its lab only): the
 * cards' kinds, names, units, parameter values, formulas and notes as plain text, so a reader sees the sheet while the
 * app's scripts load and start. It is read-only, computes nothing (results come from the browser's evaluator) and is
 * replaced by the live cards as soon as they are on screen (src/lib/pagePreview.ts).
 *
 * Everything taken from the sheet is escaped; the markup carries no script and no link.
 */
import type { Cell, SheetFile } from '../shared/schema/sheet'
import { QUANTITY_LABELS } from '../shared/schema/sheet'
import { prettyUnit } from '../shared/plot/units'
import { formatNumber } from '../shared/plot/format'
import type { AppDeps } from './deps'
import { escapeHtml } from './mail/messages'
import { sheetAccess } from './services/access'
import { loadSheetFile } from './services/documents'
import type { PagePreview } from './static'

/** The page's marker (index.html) where the first view goes. */
export const PREVIEW_MARKER = '<!--pn-preview-->'

/** Cards shown at most: the first screenful and more; the live page brings the rest. */
const MAX_CARDS = 40
/** Characters of a formula, note or description shown at most. */
const MAX_TEXT = 600

const FIT_WORDS: Record<'tauc' | 'urbach' | 'model', string> = {
  tauc: 'band gap from a Tauc line',
  urbach: 'Urbach energy from the edge',
  model: 'model fit',
}

function clip(text: string, max = MAX_TEXT): string {
  return text.length > max ? `${text.slice(0, max - 1)}…` : text
}

function unitTag(unit: string | undefined): string {
  return unit ? `<span class="pn-preview-unit">[${escapeHtml(prettyUnit(unit))}]</span>` : ''
}

function line(text: string, className = 'pn-preview-line'): string {
  return `<p class="${className}">${escapeHtml(clip(text))}</p>`
}

function range(from: number | undefined, to: number | undefined, unit: string | undefined): string {
  if (from === undefined && to === undefined) return ''
  const u = unit ? ` ${prettyUnit(unit)}` : ''
  return ` from ${from ?? '…'} to ${to ?? '…'}${u}`
}

/** A note's text as written, its heading lines (`## …`) in bold without their marks. */
function noteText(text: string): string {
  return clip(text)
    .split('\n')
    .map((l) => {
      const heading = /^#{1,6}\s+(.*)$/.exec(l)
      return heading ? `<strong>${escapeHtml(heading[1])}</strong>` : escapeHtml(l)
    })
    .join('\n')
}

/** The body of one card: what the cell holds, in the words the live card uses. */
function body(cell: Cell): string {
  switch (cell.kind) {
    case 'parameter':
      return `<p class="pn-preview-value pn-mono">${escapeHtml(formatNumber(cell.value, 12))}${cell.unit ? ` ${escapeHtml(prettyUnit(cell.unit))}` : ''}</p>`
    case 'formula':
      return `<pre class="pn-preview-source pn-mono">${escapeHtml(clip(cell.source))}</pre>`
    case 'spectrum': {
      const columns = Object.entries(cell.columns).map(([name, c]) => {
        const label = c.quantity ? (QUANTITY_LABELS[c.quantity as keyof typeof QUANTITY_LABELS] ?? c.quantity) : ''
        const parts = [label, c.unit ? prettyUnit(c.unit) : '', c.count !== undefined ? `${c.count} points` : ''].filter(Boolean)
        return parts.length ? `${name} (${parts.join(', ')})` : name
      })
      return (cell.sample ? line(`Sample ${cell.sample}`) : '') + line(`Columns: ${columns.join(', ') || 'none yet'}`)
    }
    case 'fit':
      return line(`${FIT_WORDS[cell.method]}: ${cell.y} against ${cell.x}${range(cell.from, cell.to, cell.unit)}`)
    case 'sweep':
      return line(
        `${cell.parameter}${range(cell.from, cell.to, cell.unit)} in ${cell.steps} steps${cell.scale === 'log' ? ' (log spaced)' : ''}; ` +
          `computes ${cell.outputs.join(', ')}`,
      )
    case 'figure': {
      const traces = cell.traces.map((t) => t.label || `${t.y} against ${t.x}`)
      return (
        (cell.title ? line(cell.title, 'pn-preview-line pn-preview-strong') : '') +
        line(traces.length ? `Plots ${traces.join('; ')}` : 'No traces yet') +
        '<div class="pn-preview-figure" aria-hidden="true"></div>'
      )
    }
    case 'note':
      return `<div class="pn-preview-note">${noteText(cell.text)}</div>`
    case 'stack':
      return line(
        `Layers: ${cell.layers.map((l) => `${l.name} (${l.thickness})`).join(', ') || 'none'}; substrate ${cell.substrate.name}; wavelength ${cell.wavelength}`,
      )
  }
}

function card(cell: Cell): string {
  const unit = cell.kind === 'formula' ? unitTag(cell.unit) : ''
  const name = 'name' in cell && cell.name ? `<span class="pn-preview-name pn-mono">${escapeHtml(cell.name)}</span>` : ''
  const description = 'description' in cell && cell.description ? line(cell.description, 'pn-preview-line pn-preview-muted') : ''
  return (
    `<article class="pn-preview-card" data-kind="${cell.kind}">` +
    `<header><span class="pn-preview-kind">${escapeHtml(cell.kind)}</span>${name}${unit}</header>` +
    description +
    body(cell) +
    '</article>'
  )
}

/** The first view of a sheet: its title and its first cards, to put at PREVIEW_MARKER. */
export function sheetPreviewHtml(sheetId: string, file: SheetFile): string {
  const cells = file.cells.slice(0, MAX_CARDS)
  const more = file.cells.length - cells.length
  return (
    `<div id="pn-preview" class="pn-preview" data-sheet-id="${escapeHtml(sheetId)}" aria-busy="true">` +
    '<div class="pn-preview-bar"></div>' +
    '<div class="pn-preview-page">' +
    `<h1 class="pn-preview-title">${escapeHtml(file.title)}</h1>` +
    '<p class="pn-preview-status">Opening the live sheet: results and figures appear in a moment.</p>' +
    (cells.length ? cells.map(card).join('') : '<p class="pn-preview-line">This sheet has no cells yet.</p>') +
    (more > 0 ? `<p class="pn-preview-line pn-preview-muted">and ${more} more cells</p>` : '') +
    '</div></div>'
  )
}

const SHEET_PAGE = /^\/sheets\/([^/]+)\/?$/

/**
 * The first view for a request, when it asks for a sheet's page and comes from a member of the sheet's lab (the same
 * rule as GET /api/sheets/:id/file, which gives any member the whole sheet); null for anything else.
 */
export function sheetPagePreview(deps: AppDeps): PagePreview {
  return async (req) => {
    const match = SHEET_PAGE.exec(req.path)
    if (!match || !req.user) return null
    let sheetId: string
    try {
      sheetId = decodeURIComponent(match[1])
    } catch {
      return null
    }
    const { sheet, role } = await sheetAccess(deps.db, sheetId, req.user.id)
    if (!sheet || !role) return null
    return sheetPreviewHtml(sheet.id, await loadSheetFile(deps.db, sheet.id, sheet.title))
  }
}
