/**
 * What every cell card reaches through inject: the live document's editing operations, presence, the results store
 * and the formula vocabulary. SheetView provides it; cards never create documents or workers themselves.
 */
import { inject, type Component, type InjectionKey, type Ref } from 'vue'
import type { SheetDoc } from '@/composables/useSheetDoc'
import type { Presence } from '@/composables/usePresence'
import type { FormulaVocabulary } from '@/components/cells/formulaLanguage'
import type { CardEditors } from './cardEditors'

export interface SheetContext {
  doc: SheetDoc
  presence: Presence
  readonly: boolean
  vocabulary: Ref<FormulaVocabulary>
  /** Bumped when the vocabulary changes, so editors re-highlight. */
  vocabularyVersion: Ref<number>
  /** Puts keyboard focus on a cell's card (after a move, a delete, Escape from an editor). */
  focusCard: (cellId: string) => void
  /** List operations with their focus handling (buttons and keyboard share them). */
  ops: CellOps
  /** How each card with an editor panel (note, figure) opens it, by cell id (see cardEditors.ts). */
  editors: CardEditors
  /** Drawn in every card's header with the cell's id (the comment badge of the review feature). */
  cellAddon?: Component
}

export interface CellOps {
  /** Moves a cell up (-1) or down (+1). */
  move: (cellId: string, delta: number) => void
  duplicate: (cellId: string) => void
  remove: (cellId: string) => void
  /** Opens the add menu for a new cell after `cellId` (or at the end). */
  addAfter: (cellId: string | null) => void
  /** Puts focus in the cell's main field (its formula, value or text). */
  edit: (cellId: string) => void
  /** Opens the measured-data import to replace a spectrum cell's data (live sheets only). */
  replaceData?: (cellId: string) => void
  /** Downloads the cell's series or table as CSV, evaluated from the live sheet (readers too; live sheets only). */
  downloadCsv?: (cellId: string) => void
}

export const SHEET_CONTEXT: InjectionKey<SheetContext> = Symbol('penumbra-sheet')

export function useSheetContext(): SheetContext {
  const ctx = inject(SHEET_CONTEXT)
  if (!ctx) throw new Error('cell cards must be inside the sheet page')
  return ctx
}
