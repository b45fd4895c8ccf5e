interface Box { x: number, y: number, width: number, height: number }
interface Pt { x: number, y: number }

const MIN_FACTOR = 0.5
const MAX_FACTOR = 12
/** Movement in px below which a press is still a tap, not a drag. */
const TAP_SLOP = 6

/**
 * Pan (drag), pinch-zoom (two pointers), wheel zoom and fit-to-screen (of the `content` box) for an SVG
 * drawing shown in `el`. Works on the pointer events of `el`; a drag swallows the click that follows it, so dragging
 * across a signal does not open it.
 */
export function usePanZoom(el: Ref<HTMLElement | null>, content: Ref<Box>) {
  const scale = ref(1)
  const tx = ref(0)
  const ty = ref(0)
  const pointers = new Map<number, Pt>()
  let fitScale = 1
  let userMoved = false
  let moved = 0
  let pinch: { dist: number, mid: Pt, s: number, tx: number, ty: number } | null = null
  let observer: ResizeObserver | null = null

  const transform = computed(() => `translate(${tx.value} ${ty.value}) scale(${scale.value})`)
  /** Drawing units per screen pixel: hit areas use it to stay at least 44 px wide at any zoom. */
  const unitsPerPx = computed(() => 1 / scale.value)

  function fit() {
    const box = el.value?.getBoundingClientRect()
    if (!box || box.width === 0 || box.height === 0) return
    const { x, y, width, height } = content.value
    fitScale = Math.min(box.width / width, box.height / height) * 0.98
    scale.value = fitScale
    tx.value = (box.width - width * fitScale) / 2 - x * fitScale
    ty.value = (box.height - height * fitScale) / 2 - y * fitScale
    userMoved = false
  }

  function zoomAt(factor: number, at?: Pt) {
    const box = el.value?.getBoundingClientRect()
    const p = at ?? { x: (box?.width ?? 0) / 2, y: (box?.height ?? 0) / 2 }
    const next = Math.min(Math.max(scale.value * factor, fitScale * MIN_FACTOR), fitScale * MAX_FACTOR)
    tx.value = p.x - (p.x - tx.value) * (next / scale.value)
    ty.value = p.y - (p.y - ty.value) * (next / scale.value)
    scale.value = next
    userMoved = true
  }

  function local(e: PointerEvent | WheelEvent): Pt {
    const box = el.value!.getBoundingClientRect()
    return { x: e.clientX - box.left, y: e.clientY - box.top }
  }

  function onPointerDown(e: PointerEvent) {
    pointers.set(e.pointerId, local(e))
    if (pointers.size === 1) moved = 0
    if (pointers.size === 2) {
      const [a, b] = [...pointers.values()] as [Pt, Pt]
      pinch = { dist: Math.hypot(a.x - b.x, a.y - b.y) || 1, mid: { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 }, s: scale.value, tx: tx.value, ty: ty.value }
    }
  }

  function onPointerMove(e: PointerEvent) {
    const before = pointers.get(e.pointerId)
    if (!before) return
    const p = local(e)
    pointers.set(e.pointerId, p)
    if (pinch && pointers.size >= 2) {
      const [a, b] = [...pointers.values()] as [Pt, Pt]
      const mid = { x: (a.x + b.x) / 2, y: (a.y + b.y) / 2 }
      const next = Math.min(Math.max(pinch.s * Math.hypot(a.x - b.x, a.y - b.y) / pinch.dist, fitScale * MIN_FACTOR), fitScale * MAX_FACTOR)
      tx.value = mid.x - (pinch.mid.x - pinch.tx) * (next / pinch.s)
      ty.value = mid.y - (pinch.mid.y - pinch.ty) * (next / pinch.s)
      scale.value = next
      moved = TAP_SLOP + 1
      userMoved = true
      return
    }
    moved += Math.hypot(p.x - before.x, p.y - before.y)
    if (moved <= TAP_SLOP) return
    if (!el.value?.hasPointerCapture?.(e.pointerId)) el.value?.setPointerCapture?.(e.pointerId)
    tx.value += p.x - before.x
    ty.value += p.y - before.y
    userMoved = true
  }

  function onPointerUp(e: PointerEvent) {
    pointers.delete(e.pointerId)
    if (pointers.size < 2) pinch = null
  }

  function onClickCapture(e: MouseEvent) {
    if (moved > TAP_SLOP) {
      e.stopPropagation()
      e.preventDefault()
      moved = 0
    }
  }

  function onWheel(e: WheelEvent) {
    e.preventDefault()
    zoomAt(Math.exp(-e.deltaY * 0.0015), local(e))
  }

  /** A point in `el` (px from its top left corner) in drawing units. */
  function toContent(x: number, y: number): [number, number] {
    return [(x - tx.value) / scale.value, (y - ty.value) / scale.value]
  }

  function panBy(dx: number, dy: number) {
    tx.value += dx
    ty.value += dy
    userMoved = true
  }

  onMounted(() => {
    fit()
    const node = el.value
    if (!node) return
    node.addEventListener('wheel', onWheel, { passive: false })
    if (typeof ResizeObserver !== 'undefined') {
      observer = new ResizeObserver(() => { if (!userMoved) fit() })
      observer.observe(node)
    }
  })
  onBeforeUnmount(() => {
    el.value?.removeEventListener('wheel', onWheel)
    observer?.disconnect()
  })
  watch(content, fit)

  const handlers = { pointerdown: onPointerDown, pointermove: onPointerMove, pointerup: onPointerUp, pointercancel: onPointerUp }
  return { transform, unitsPerPx, scale, fit, zoomAt, panBy, toContent, handlers, onClickCapture }
}
