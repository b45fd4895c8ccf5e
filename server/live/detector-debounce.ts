/**
 * Holds each detector's "clear" for a while before passing it on: a wheel losing contact on dirty track
 * reads as a brief clear. A clear followed by occupied within the hold time is a dropout, reported instead.
 */
export interface DebounceOutput {
  /** Pass a detector change on to the engine. */
  change: (detector: string, occupied: boolean, at: number) => void
  /** The detector dropped out briefly and came back. */
  dropout: (detector: string, at: number) => void
}

export class DetectorDebounce {
  private pending = new Map<string, { timer: ReturnType<typeof setTimeout>, at: number }>()

  constructor(private readonly holdMs: number, private readonly out: DebounceOutput) {}

  input(detector: string, occupied: boolean, at: number): void {
    const held = this.pending.get(detector)
    if (occupied) {
      if (held) {
        clearTimeout(held.timer)
        this.pending.delete(detector)
        this.out.dropout(detector, held.at)
        return
      }
      this.out.change(detector, true, at)
      return
    }
    if (held) return // already holding a clear for this detector
    if (this.holdMs <= 0) { this.out.change(detector, false, at); return }
    const timer = setTimeout(() => {
      this.pending.delete(detector)
      this.out.change(detector, false, at)
    }, this.holdMs)
    this.pending.set(detector, { timer, at })
  }

  /** Passes every held clear on now (used when shutting down). */
  flush(): void {
    for (const [detector, held] of this.pending) {
      clearTimeout(held.timer)
      this.out.change(detector, false, held.at)
    }
    this.pending.clear()
  }

  cancel(): void {
    for (const held of this.pending.values()) clearTimeout(held.timer)
    this.pending.clear()
  }
}
