/**
 * A CodeMirror 6 editor bound to a Y.Text with y-codemirror.next: concurrent typing, remote carets and selections
 * from awareness, undo and redo through this person's Y.UndoManager. Readers get the same editor, not editable.
 * The editor is rebuilt when the Y.Text changes (a moved cell has a new one) and destroyed with the component.
 */
import { onScopeDispose, shallowRef, watch, type Ref } from 'vue'
import type * as Y from 'yjs'
import type { Awareness } from 'y-protocols/awareness'
import { Compartment, EditorState, type Extension } from '@codemirror/state'
import { EditorView, keymap, placeholder as placeholderExt, drawSelection, highlightSpecialChars, type KeyBinding } from '@codemirror/view'
import { defaultKeymap } from '@codemirror/commands'
import { autocompletion, closeBrackets, closeBracketsKeymap, completionKeymap, type CompletionSource } from '@codemirror/autocomplete'
import { bracketMatching } from '@codemirror/language'
import { yCollab, yUndoManagerKeymap } from 'y-codemirror.next'

export interface CodeMirrorOptions {
  parent: Ref<HTMLElement | null>
  /** The text to edit; the editor follows when it changes. */
  text: () => Y.Text | undefined
  awareness: Awareness
  undoManager: Y.UndoManager
  readonly: boolean
  /** Extra extensions (highlighting), rebuilt when `extrasKey` changes. */
  extras?: () => Extension
  extrasKey?: () => unknown
  completion?: CompletionSource
  placeholder?: string
  /** Long text (notes) wraps; formulas wrap too, so a long source stays visible. */
  ariaLabel?: string
  onFocus?: () => void
  onBlur?: () => void
  /** Escape: leave the editor (the card takes focus). */
  onEscape?: () => void
}

const baseTheme = EditorView.theme({
  '&': { fontSize: '14px', backgroundColor: 'transparent' },
  '&.cm-focused': { outline: 'none' },
  '.cm-content': { fontFamily: 'var(--pn-font-mono)', padding: '6px 0', caretColor: 'var(--pn-ink)' },
  '.cm-line': { padding: '0 8px' },
  '.cm-scroller': { fontFamily: 'var(--pn-font-mono)', lineHeight: '1.55' },
  '.cm-placeholder': { color: 'var(--pn-muted)' },
  '.cm-tooltip.cm-tooltip-autocomplete > ul': { fontFamily: 'var(--pn-font-mono)', maxHeight: '16em' },
  '.cm-completionInfo': { fontFamily: 'var(--pn-font-sans)', maxWidth: '28em', whiteSpace: 'normal' },
  '.cm-completionDetail': { color: 'var(--pn-muted)', fontStyle: 'normal', marginLeft: '0.75em' },
  '.cm-tooltip': { border: '1px solid var(--pn-line)', backgroundColor: 'var(--pn-surface)', borderRadius: '6px', boxShadow: 'var(--pn-shadow)' },
  '.cm-tooltip.cm-tooltip-autocomplete > ul > li': { padding: '2px 8px' },
  '.cm-tooltip.cm-tooltip-autocomplete > ul > li[aria-selected]': { backgroundColor: 'var(--pn-night)', color: '#fff' },
  '.cm-tooltip.cm-tooltip-autocomplete > ul > li[aria-selected] .cm-completionDetail': { color: 'rgba(255, 255, 255, 0.78)' },
  '.cm-completionMatchedText': { textDecoration: 'none', fontWeight: '600' },
  '.cm-tooltip.cm-completionInfo': { padding: '4px 8px', color: 'var(--pn-ink)' },
  '.cm-ySelectionInfo': { fontFamily: 'var(--pn-font-sans)', opacity: 1, borderRadius: '3px', padding: '0 4px' },
})

export function useCodeMirror(options: CodeMirrorOptions) {
  const view = shallowRef<EditorView | null>(null)
  const extrasCompartment = new Compartment()

  function destroy(): void {
    view.value?.destroy()
    view.value = null
  }

  function build(parent: HTMLElement, ytext: Y.Text): void {
    destroy()
    const keys: KeyBinding[] = [
      {
        key: 'Escape',
        run: () => {
          if (!options.onEscape) return false
          options.onEscape()
          return true
        },
      },
      ...closeBracketsKeymap,
      ...completionKeymap,
      ...yUndoManagerKeymap,
      ...defaultKeymap,
    ]
    const extensions: Extension[] = [
      highlightSpecialChars(),
      drawSelection(),
      bracketMatching(),
      EditorView.lineWrapping,
      baseTheme,
      keymap.of(keys),
      yCollab(ytext, options.awareness, { undoManager: options.undoManager }),
      extrasCompartment.of(options.extras ? options.extras() : []),
      EditorView.contentAttributes.of({ 'aria-label': options.ariaLabel ?? 'Formula', spellcheck: 'false', autocapitalize: 'off' }),
      EditorView.domEventHandlers({
        focus: () => {
          options.onFocus?.()
          return false
        },
        blur: () => {
          // y-codemirror only clears this person's caret on the next editor update, which leaving an editor does
          // not always bring: without this, others keep seeing a caret in a formula this person has left
          if ((options.awareness.getLocalState() as { cursor?: unknown } | null)?.cursor != null) options.awareness.setLocalStateField('cursor', null)
          options.onBlur?.()
          return false
        },
      }),
    ]
    if (options.readonly) {
      extensions.push(EditorState.readOnly.of(true), EditorView.editable.of(false))
    } else {
      extensions.push(closeBrackets())
      // interactionDelay 0: Enter right after the list changed still takes the highlighted name (the default ignores
      // it for 75 ms and inserts a line break into the formula instead)
      if (options.completion) extensions.push(autocompletion({ override: [options.completion], icons: false, activateOnTyping: true, interactionDelay: 0 }))
      if (options.placeholder) extensions.push(placeholderExt(options.placeholder))
    }
    view.value = new EditorView({
      parent,
      state: EditorState.create({ doc: ytext.toString(), extensions }),
    })
  }

  watch(
    () => [options.parent.value, options.text()] as const,
    ([parent, ytext]) => {
      if (parent && ytext) build(parent, ytext)
      else destroy()
    },
    { immediate: true, flush: 'post' },
  )

  if (options.extrasKey) {
    watch(options.extrasKey, () => {
      view.value?.dispatch({ effects: extrasCompartment.reconfigure(options.extras ? options.extras() : []) })
    })
  }

  /** Focuses the editor; `atEnd` puts the caret after the last character (opening a text to add to it). */
  function focus(atEnd = false): void {
    const v = view.value
    if (!v) return
    if (atEnd) v.dispatch({ selection: { anchor: v.state.doc.length }, scrollIntoView: true })
    v.focus()
  }

  onScopeDispose(destroy)

  return { view, focus }
}
