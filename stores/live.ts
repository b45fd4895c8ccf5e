import { emptyView } from '#shared/live/apply'
import {
  COMMAND_TIMEOUT_MS, NOT_CONNECTED, NO_ANSWER_LOST, NO_ANSWER_TIMEOUT, NO_WORD, REPEAT_TAP_MS, THROW_REPORT_MS, commandLabel, commandTarget, newCommandId,
  type CommandRecord, type ThrowRequest,
} from '#shared/live/commands'
import { LiveConnection, type ConnectionState, type SocketLike } from '#shared/live/connection'
import type { LiveCommand, LiveUser, ServerMessage } from '#shared/live/protocol'

/** How many recent commands the panel keeps to show their outcome. */
const COMMAND_HISTORY = 20

function liveUrl(): string {
  return `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/live`
}

/**
 * The live state of the layout on the Panel, fed only by the `/live` WebSocket (shared/live/connection.ts
 * does the protocol; shared/live/apply.ts the state changes). Commands go out through `send` and are
 * tracked until the server's command-result.
 */
export const useLiveStore = defineStore('live', () => {
  const view = reactive(emptyView())
  const connection = ref<ConnectionState>('idle')
  const attempt = ref(0)
  const me = ref<LiveUser | null>(null)
  const serverError = ref<string | null>(null)
  const commands = ref<CommandRecord[]>([])
  /** Throws asked for from this panel, by turnout, until the turnout reports the position asked for. */
  const throws = reactive<Record<string, ThrowRequest>>({})
  let link: LiveConnection | null = null
  const timeouts = new Map<string, ReturnType<typeof setTimeout>>()

  function settle(id: string, status: CommandRecord['status'], reason: string | null) {
    const rec = commands.value.find(c => c.id === id)
    if (!rec || rec.status !== 'pending') return
    rec.status = status
    rec.reason = reason
    clearTimeout(timeouts.get(id))
    timeouts.delete(id)
  }

  function onState(state: ConnectionState, n: number) {
    connection.value = state
    attempt.value = n
    if (state === 'live') serverError.value = null
    // stale: the socket is still open, so a command already sent may yet be answered (or refused as late)
    else if (state !== 'stale') for (const c of commands.value) if (c.status === 'pending') settle(c.id, 'no-answer', NO_ANSWER_LOST)
  }

  /** Handles one server message: everything but snapshot and delta, which the connection applies to the view. */
  function receive(msg: ServerMessage) {
    if (msg.type === 'welcome') me.value = msg.user
    else if (msg.type === 'command-result') settle(msg.id, msg.ok ? 'done' : 'refused', msg.ok ? msg.note ?? null : msg.reason)
    else if (msg.type === 'error') serverError.value = msg.message
  }

  function connect(layout: string, createSocket: (url: string) => SocketLike = url => new WebSocket(url)) {
    if (link?.layout === layout && link.state !== 'idle') return
    disconnect()
    Object.assign(view, emptyView())
    commands.value = []
    link = new LiveConnection({
      url: liveUrl(), layout, view, createSocket, onState, onMessage: receive,
      isOnline: () => navigator.onLine,
    })
    window.addEventListener('online', retryNow)
    link.start()
  }

  function disconnect() {
    window.removeEventListener('online', retryNow)
    link?.stop()
    link = null
  }

  function retryNow() {
    link?.retryNow()
  }

  /**
   * Sends a command and returns its record, which the server's command-result settles. A second command on
   * the same item within REPEAT_TAP_MS of the first (a double tap: Take, then the Release that took its
   * place) is not sent: the first one's record is returned.
   */
  function send(command: LiveCommand): CommandRecord {
    const target = commandTarget(command)
    const now = Date.now()
    const previous = latestFor(target)
    if (previous && now - previous.at < REPEAT_TAP_MS) return previous
    const rec: CommandRecord = {
      id: newCommandId(), command, target, label: commandLabel(command, view.definition, view.operators),
      status: 'pending', reason: null, at: now,
    }
    commands.value = [rec, ...commands.value].slice(0, COMMAND_HISTORY)
    const sent = connection.value === 'live' && link?.send({ type: 'command', id: rec.id, command, madeAt: link.serverNow(now) })
    if (!sent) settle(rec.id, 'refused', connection.value === 'stale' ? NO_WORD : NOT_CONNECTED)
    else {
      timeouts.set(rec.id, setTimeout(() => settle(rec.id, 'no-answer', NO_ANSWER_TIMEOUT), COMMAND_TIMEOUT_MS))
      if (command.action === 'set-turnout' || command.action === 'force-turnout') trackThrow(command.turnout, command.position, rec.id)
    }
    return commands.value[0]!
  }

  // A throw is only done when the turnout reports it (the server's answer means the request went out).
  function trackThrow(turnout: string, position: 'normal' | 'reverse', commandId: string) {
    throws[turnout] = { commandId, position, at: Date.now(), late: false }
    setTimeout(() => {
      const t = throws[turnout]
      if (t?.commandId === commandId) t.late = true
    }, THROW_REPORT_MS)
  }

  watch(() => ({ ...view.state.turnouts }), (now) => {
    for (const [turnout, t] of Object.entries(throws)) if (now[turnout] === t.position) delete throws[turnout]
  })

  /** The throw this panel is waiting for on `turnout`: asked for and not refused, not yet reported. */
  function throwFor(turnout: string): ThrowRequest | null {
    const t = throws[turnout]
    if (!t || view.state.turnouts[turnout] === t.position) return null
    const rec = commands.value.find(c => c.id === t.commandId)
    return rec && (rec.status === 'pending' || rec.status === 'done') ? t : null
  }

  /** The newest command about `target` (e.g. "signal:SU1"), if any. */
  function latestFor(target: string): CommandRecord | null {
    return commands.value.find(c => c.target === target) ?? null
  }

  return { view, connection, attempt, me, serverError, commands, throws, receive, connect, disconnect, retryNow, send, latestFor, throwFor }
})
