import type { Peer } from 'crossws'
import { PanelConnection } from '../live/connection'

// Messages may arrive while `open` is still loading the user: they wait for the connection.
const connections = new WeakMap<Peer, Promise<PanelConnection | null>>()

const DATABASE_AWAY = 'the database is not reachable just now; try again in a moment'

async function openConnection(peer: Peer): Promise<PanelConnection | null> {
  const session = liveSessionOf(await requireUserSession(peer as never))
  const user = session && await loadLiveUser(session)
  if (!session || !user) { peer.close(4001, 'session ended'); return null }
  const live = useLive()
  await live.whenReady()
  const connection = new PanelConnection(peer, user, session, live, () => loadLiveUser(session))
  live.addPanel(connection)
  connection.send({ type: 'welcome', user })
  return connection
}

// The panels' live channel (protocol: shared/live/protocol.ts). Refused without a valid session or from
// a foreign Origin; every message is validated and every command checked on the server.
export default defineWebSocketHandler({
  async upgrade(request) {
    if (!originAllowed(request.headers)) throw new Response('Forbidden: foreign origin', { status: 403 })
    const sealed = await getUserSession(request as never).catch(() => null)
    const session = sealed && liveSessionOf(sealed)
    if (!session) throw new Response('Unauthorized: sign in first', { status: 401 })
    // crossws refuses the upgrade only for a thrown Response: any other error would leave the client hanging.
    const user = await loadLiveUser(session).catch((error: Error) => {
      console.error(`[blockbell] live handshake: ${error.message}`)
      throw new Response(`Service Unavailable: ${DATABASE_AWAY}`, { status: 503 })
    })
    if (!user) throw new Response('Unauthorized: session ended, sign in again', { status: 401 })
  },
  open(peer) {
    connections.set(peer, openConnection(peer).catch((error: Error) => {
      console.error(`[blockbell] live connection failed: ${error.message}`)
      peer.close(1011, 'server error')
      return null
    }))
  },
  async message(peer, message) {
    const connection = await connections.get(peer)
    if (!connection) return
    await connection.receive(message.text()).catch((error: Error) => {
      console.error(`[blockbell] live message failed: ${error.message}`)
      connection.send({ type: 'error', message: 'The server could not handle that message; nothing was changed.' })
    })
  },
  async close(peer) {
    const connection = await connections.get(peer)
    if (connection) {
      connection.leave()
      useLive().removePanel(connection)
    }
    connections.delete(peer)
  },
})
