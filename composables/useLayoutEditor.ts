import type { Layout } from '#shared/schemas/layout'
import { validateLayout, type ValidationError } from '#shared/signalling'
import { itemOfError, type ItemRef } from '#shared/layouts/editing'

const HISTORY = 100

export interface StoredDraft { baseVersion: number, definition: Layout, keptAt: number }

export const draftKey = (slug: string) => `blockbell:layout-draft:${slug}`

/**
 * The editor's working copy of a layout: every change goes through `change(fn)`, which keeps the state before
 * it for undo, validates the result (validateLayout, the same check the server makes) and keeps the draft in
 * this browser's localStorage, so a tablet that sleeps or a reload loses nothing.
 * A drag changes the drawing many times a second: `begin()` once, `preview(fn)` as it moves, `commit()` at the end.
 */
export function useLayoutEditor(slug: string, initial: Layout, baseVersion: Ref<number>) {
  const def = ref<Layout>(structuredClone(initial)) as Ref<Layout>
  const undoStack = shallowRef<Layout[]>([])
  const redoStack = shallowRef<Layout[]>([])
  const revision = ref(0)
  const savedRevision = ref(0)
  const selected = ref<ItemRef | null>(null)

  const validation = computed(() => {
    void revision.value
    return validateLayout(toRaw(def.value))
  })
  const errors = computed<ValidationError[]>(() => (validation.value.ok ? [] : validation.value.errors))
  /** Errors grouped by the item they are about (key `kind:id`); errors about the layout as a whole under ''. */
  const errorsByItem = computed(() => {
    const out = new Map<string, ValidationError[]>()
    for (const e of errors.value) {
      const item = itemOfError(def.value, e.path)
      const key = item ? `${item.kind}:${item.id}` : ''
      out.set(key, [...(out.get(key) ?? []), e])
    }
    return out
  })
  const dirty = computed(() => revision.value !== savedRevision.value)
  const canUndo = computed(() => undoStack.value.length > 0)
  const canRedo = computed(() => redoStack.value.length > 0)

  function keepDraft() {
    if (!import.meta.client) return
    try {
      if (dirty.value) localStorage.setItem(draftKey(slug), JSON.stringify({ baseVersion: baseVersion.value, definition: toRaw(def.value), keptAt: Date.now() } satisfies StoredDraft))
      else localStorage.removeItem(draftKey(slug))
    } catch { /* storage full or blocked: the editor still works, only without the safety copy */ }
  }

  function checkpoint() {
    undoStack.value = [...undoStack.value.slice(-HISTORY + 1), structuredClone(toRaw(def.value))]
    redoStack.value = []
  }

  function settled() {
    revision.value++
    keepDraft()
  }

  function change(fn: (d: Layout) => void) {
    checkpoint()
    fn(def.value)
    settled()
  }

  let dragStart: Layout | null = null
  function begin() { dragStart = structuredClone(toRaw(def.value)) }
  /** One step of a drag: `fn` gets the drawing as it was when the drag began, to move from there. */
  function preview(fn: (d: Layout, start: Layout) => void) {
    if (dragStart) fn(def.value, dragStart)
  }
  function commit() {
    if (!dragStart) return
    const start = dragStart
    dragStart = null
    if (JSON.stringify(start) === JSON.stringify(toRaw(def.value))) return
    undoStack.value = [...undoStack.value.slice(-HISTORY + 1), start]
    redoStack.value = []
    settled()
  }

  function undo() {
    const prev = undoStack.value.at(-1)
    if (!prev) return
    undoStack.value = undoStack.value.slice(0, -1)
    redoStack.value = [...redoStack.value, structuredClone(toRaw(def.value))]
    def.value = prev
    settled()
  }

  function redo() {
    const next = redoStack.value.at(-1)
    if (!next) return
    redoStack.value = redoStack.value.slice(0, -1)
    undoStack.value = [...undoStack.value, structuredClone(toRaw(def.value))]
    def.value = next
    settled()
  }

  /** After a save (or a fresh load): this is the state the server has. */
  function markSaved(version: number, definition?: Layout) {
    baseVersion.value = version
    if (definition) {
      def.value = structuredClone(definition)
      undoStack.value = []
      redoStack.value = []
      revision.value++
    }
    savedRevision.value = revision.value
    keepDraft()
  }

  /** Takes up a draft kept in this browser (unsaved changes from before a reload). */
  function restoreDraft(draft: StoredDraft) {
    checkpoint()
    def.value = structuredClone(draft.definition)
    settled()
  }

  return { def, selected, validation, errors, errorsByItem, dirty, canUndo, canRedo, change, begin, preview, commit, undo, redo, markSaved, restoreDraft }
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
