import type { Layout } from '#shared/schemas/layout'
import { validateLayout, type ValidationError } from '#shared/signalling'
import type { ShallowRef } from 'vue'
import { itemOfError, shareUnchanged, type DragMoves, type ItemRef } from '#shared/layouts/editing'

const HISTORY = 100
/** The draft is written to localStorage this long after the last change (and at once when the page is left). */
const DRAFT_DELAY_MS = 400

export interface StoredDraft { baseVersion: number, definition: Layout, keptAt: number }

export const draftKey = (slug: string) => `blockbell:layout-draft:${slug}`

/**
 * A drag under way: what it moves, and the layout as it is drawn now (null until the first step). The drawing
 * reads `layout` in the one layer that draws the moving parts, so a step redraws that layer alone.
 */
export interface EditorDrag { moves: DragMoves, layout: Readonly<ShallowRef<Layout | null>> }

/**
 * The editor's working copy of a layout: every change goes through `change(fn)`, which keeps the state before
 * it for undo, validates the result (validateLayout, the same check the server makes) and keeps the draft in
 * this browser's localStorage, so a tablet that sleeps or a reload loses nothing.
 * A drag changes the drawing many times a second: `begin(moves)` once, `preview(fn)` as it moves, `commit()` at
 * the end. While it lasts the working copy stays as it was when it began (so nothing that shows the working
 * copy works again at every step): each step goes to `drag.layout`, and the end makes it the working copy.
 *
 * The working copy is plain data in a shallowRef, never changed in place: each change makes a new layout that
 * shares every part it did not touch with the one before (shareUnchanged). So nothing pays for Vue's deep
 * tracking of 500 blocks, the drawing redraws only the items whose data changed, and the undo list holds the
 * old layouts themselves.
 */
export function useLayoutEditor(slug: string, initial: Layout, baseVersion: Ref<number>) {
  const def = shallowRef<Layout>(structuredClone(toRaw(initial)))
  /** The working copy as of the last finished change (not the steps of a drag): what is validated and kept. */
  const settledDef = shallowRef<Layout>(def.value)
  const undoStack = shallowRef<Layout[]>([])
  const redoStack = shallowRef<Layout[]>([])
  const revision = ref(0)
  const savedRevision = ref(0)
  const selected = ref<ItemRef | null>(null)

  const validation = computed(() => validateLayout(settledDef.value))
  const errors = computed<ValidationError[]>(() => (validation.value.ok ? [] : validation.value.errors))
  /** Errors grouped by the item they are about (key `kind:id`); errors about the layout as a whole under ''. */
  const errorsByItem = computed(() => {
    const out = new Map<string, ValidationError[]>()
    for (const e of errors.value) {
      const item = itemOfError(settledDef.value, e.path)
      const key = item ? `${item.kind}:${item.id}` : ''
      out.set(key, [...(out.get(key) ?? []), e])
    }
    return out
  })
  const dirty = computed(() => revision.value !== savedRevision.value)
  const canUndo = computed(() => undoStack.value.length > 0)
  const canRedo = computed(() => redoStack.value.length > 0)

  let draftTimer: ReturnType<typeof setTimeout> | null = null
  function writeDraft() {
    if (draftTimer) clearTimeout(draftTimer)
    draftTimer = null
    try {
      if (dirty.value) localStorage.setItem(draftKey(slug), JSON.stringify({ baseVersion: baseVersion.value, definition: settledDef.value, keptAt: Date.now() } satisfies StoredDraft))
      else localStorage.removeItem(draftKey(slug))
    } catch { /* storage full or blocked: the editor still works, only without the safety copy */ }
  }
  // writing 500 blocks as JSON takes a while on a tablet: once after a burst of changes, not at each one
  function keepDraft() {
    if (!import.meta.client) return
    if (draftTimer) clearTimeout(draftTimer)
    draftTimer = setTimeout(writeDraft, DRAFT_DELAY_MS)
  }
  const flushDraft = () => { if (draftTimer) writeDraft() }
  const onHidden = () => { if (document.visibilityState === 'hidden') flushDraft() }
  if (import.meta.client) {
    onMounted(() => {
      window.addEventListener('pagehide', flushDraft)
      document.addEventListener('visibilitychange', onHidden)
    })
    onBeforeUnmount(() => {
      flushDraft()
      window.removeEventListener('pagehide', flushDraft)
      document.removeEventListener('visibilitychange', onHidden)
    })
  }

  function remember(layout: Layout) {
    undoStack.value = [...undoStack.value.slice(-HISTORY + 1), layout]
    redoStack.value = []
  }

  function show(next: Layout) {
    def.value = shareUnchanged(def.value, next)
  }

  function settled() {
    settledDef.value = def.value
    revision.value++
    keepDraft()
  }

  /** `fn` edits a copy of the working copy in place; the result becomes the working copy. */
  function change(fn: (d: Layout) => void) {
    const before = def.value
    const next = structuredClone(before)
    fn(next)
    show(next)
    if (def.value === before) return
    remember(before)
    settled()
  }

  let dragStart: Layout | null = null
  const dragLayout = shallowRef<Layout | null>(null)
  const drag = shallowRef<EditorDrag | null>(null)
  function begin(moves: DragMoves) {
    dragStart = def.value
    dragLayout.value = null
    drag.value = { moves, layout: dragLayout }
  }
  /** One step of a drag: `fn` gets the drawing as it was when the drag began and returns it as it is now. */
  function preview(fn: (start: Layout) => Layout) {
    if (dragStart) dragLayout.value = fn(dragStart)
  }
  function commit() {
    const start = dragStart
    const moved = dragLayout.value
    dragStart = null
    dragLayout.value = null
    drag.value = null
    if (!start || !moved) return
    const next = shareUnchanged(start, moved)
    if (next === start) return
    def.value = next
    remember(start)
    settled()
  }

  function undo() {
    const prev = undoStack.value.at(-1)
    if (!prev) return
    undoStack.value = undoStack.value.slice(0, -1)
    redoStack.value = [...redoStack.value, def.value]
    def.value = prev
    settled()
  }

  function redo() {
    const next = redoStack.value.at(-1)
    if (!next) return
    redoStack.value = redoStack.value.slice(0, -1)
    undoStack.value = [...undoStack.value, def.value]
    def.value = next
    settled()
  }

  /** After a save (or a fresh load): this is the state the server has. */
  function markSaved(version: number, definition?: Layout) {
    baseVersion.value = version
    if (definition) {
      def.value = structuredClone(toRaw(definition))
      settledDef.value = def.value
      undoStack.value = []
      redoStack.value = []
      revision.value++
    }
    savedRevision.value = revision.value
    if (import.meta.client) writeDraft()
  }

  /** Takes up a draft kept in this browser (unsaved changes from before a reload). */
  function restoreDraft(draft: StoredDraft) {
    remember(def.value)
    show(structuredClone(toRaw(draft.definition)))
    settled()
  }

  return { def, drag, selected, validation, errors, errorsByItem, dirty, canUndo, canRedo, change, begin, preview, commit, undo, redo, markSaved, restoreDraft }
}

export type LayoutEditor = ReturnType<typeof useLayoutEditor>

/** The draft of a layout kept in this browser, if any. */
export function readStoredDraft(slug: string): StoredDraft | null {
  if (!import.meta.client) return null
  try {
    const raw = localStorage.getItem(draftKey(slug))
    return raw ? JSON.parse(raw) as StoredDraft : null
  } catch { return null }
}
