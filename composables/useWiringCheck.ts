import type { ServerMessage, DeviceStatus } from '#shared/live/protocol'

export interface SeenItem { value: string, at: number, count: number }

/**
 * The live wiring check: listens to the layout's live channel (the same WebSocket as the Panel, fed by the
 * layout's MQTT messages) and records, per detector and turnout, the last report, when it came and how many
 * came, and each controller's online/offline status.
 */
export function useWiringCheck(slug: string) {
  const seen = ref<Record<string, SeenItem>>({})
  const devices = ref<Record<string, DeviceStatus>>({})
  const connected = ref(false)
  let socket: WebSocket | null = null
  let retry: ReturnType<typeof setTimeout> | null = null
  let stopped = false

  function note(key: string, value: string, at: number) {
    const before = seen.value[key]
    seen.value = { ...seen.value, [key]: { value, at, count: (before?.count ?? 0) + 1 } }
  }

  function receive(msg: ServerMessage) {
    if (msg.type === 'snapshot') {
      connected.value = true
      devices.value = { ...msg.devices }
    } else if (msg.type === 'delta') {
      for (const c of msg.changes) {
        if (c.type === 'detector') note(`detector:${c.detector}`, c.occupied ? '1' : '0', c.at)
        else if (c.type === 'turnout') note(`turnout:${c.turnout}`, c.position, c.at)
        else if (c.type === 'device') devices.value = { ...devices.value, [c.device]: c.status }
      }
    }
  }

  function open() {
    if (stopped) return
    const url = `${location.protocol === 'https:' ? 'wss' : 'ws'}://${location.host}/live`
    socket = new WebSocket(url)
    socket.onopen = () => socket?.send(JSON.stringify({ type: 'subscribe', layout: slug }))
    socket.onmessage = (e) => { try { receive(JSON.parse(String(e.data)) as ServerMessage) } catch { /* not ours */ } }
    socket.onclose = () => {
      connected.value = false
      socket = null
      if (!stopped) retry = setTimeout(open, 2000)
    }
  }

  onMounted(open)
  onBeforeUnmount(() => {
    stopped = true
    if (retry) clearTimeout(retry)
    socket?.close()
  })

  function reset() { seen.value = {} }

  return { seen, devices, connected, reset }
}
