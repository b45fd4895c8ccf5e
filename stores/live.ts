import { emptyView } from '#shared/live/apply'
import {
  COMMAND_TIMEOUT_MS, NOT_CONNECTED, NO_ANSWER_LOST, NO_ANSWER_TIMEOUT, commandLabel, commandTarget, newCommandId,
  type CommandRecord,
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
    else for (const c of commands.value) if (c.status === 'pending') settle(c.id, 'no-answer', NO_ANSWER_LOST)
  }

  /** Handles one server message: everything but snapshot and delta, which the connection applies to the view. */
  function receive(msg: ServerMessage) {
    if (msg.type === 'welcome') me.value = msg.user
    else if (msg.type === 'command-result') settle(msg.id, msg.ok ? 'done' : 'refused', msg.ok ? null : msg.reason)
    else if (msg.type === 'error') serverError.value = msg.message
  }

  function connect(layout: string, createSocket: (url: string) => SocketLike = url => new WebSocket(url)) {
    if (link?.layout === layout && link.state !== 'idle') return
    disconnect()
    Object.assign(view, emptyView())
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

  /** Sends a command and returns its record, which the server's command-result settles. */
  function send(command: LiveCommand): CommandRecord {
    const rec: CommandRecord = {
      id: newCommandId(), command, target: commandTarget(command), label: commandLabel(command, view.definition, view.operators),
      status: 'pending', reason: null, at: Date.now(),
    }
    commands.value = [rec, ...commands.value].slice(0, COMMAND_HISTORY)
    const sent = connection.value === 'live' && link?.send({ type: 'command', id: rec.id, command })
    if (!sent) settle(rec.id, 'refused', NOT_CONNECTED)
    else timeouts.set(rec.id, setTimeout(() => settle(rec.id, 'no-answer', NO_ANSWER_TIMEOUT), COMMAND_TIMEOUT_MS))
    return commands.value[0]!
  }

  /** The newest command about `target` (e.g. "signal:SU1"), if any. */
  function latestFor(target: string): CommandRecord | null {
    return commands.value.find(c => c.target === target) ?? null
  }

  return { view, connection, attempt, me, serverError, commands, receive, connect, disconnect, retryNow, send, latestFor }
})
