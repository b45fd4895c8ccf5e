import type { Peer } from 'crossws'
import type { ServerMessage } from '#shared/live/protocol'

/** The WebSocket connections watching each layout. */
export class PanelHub {
  private byLayout = new Map<string, Set<Peer>>()

  join(slug: string, peer: Peer): void {
    let peers = this.byLayout.get(slug)
    if (!peers) this.byLayout.set(slug, peers = new Set())
    peers.add(peer)
  }

  leave(slug: string, peer: Peer): void {
    this.byLayout.get(slug)?.delete(peer)
  }

  /** Sends one message to every panel of a layout, serialised once. */
  broadcast(slug: string, message: ServerMessage): void {
    const peers = this.byLayout.get(slug)
    if (!peers?.size) return
    const text = JSON.stringify(message)
    for (const peer of peers) {
      try { peer.send(text) } catch { peers.delete(peer) }
    }
  }

  /** Sends one message to every panel of every layout (the heartbeat), serialised once. */
  broadcastAll(message: ServerMessage): void {
    const text = JSON.stringify(message)
    for (const peers of this.byLayout.values()) {
      for (const peer of peers) {
        try { peer.send(text) } catch { peers.delete(peer) }
      }
    }
  }

  count(slug: string): number { return this.byLayout.get(slug)?.size ?? 0 }
}
