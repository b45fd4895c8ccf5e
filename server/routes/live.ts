import type { Peer } from 'crossws'
import { PanelConnection } from '../live/connection'

// Messages may arrive while `open` is still loading the user: they wait for the connection.
const connections = new WeakMap<Peer, Promise<PanelConnection | null>>()

async function openConnection(peer: Peer): Promise<PanelConnection | null> {
  const { user: sessionUser } = await requireUserSession(peer as never)
  const user = await loadLiveUser(sessionUser.id)
  if (!user) { peer.close(4001, 'account disabled'); return null }
  const live = useLive()
  await live.whenReady()
  const connection = new PanelConnection(peer, user, live, () => loadLiveUser(user.id))
  connection.send({ type: 'welcome', user })
  return connection
}

// The panels' live channel (protocol: shared/live/protocol.ts). Refused without a valid session or from
// a foreign Origin; every message is validated and every command checked on the server.
export default defineWebSocketHandler({
  async upgrade(request) {
    if (!originAllowed(request.headers)) throw new Response('Forbidden: foreign origin', { status: 403 })
    const session = await getUserSession(request as never).catch(() => null)
    if (!session?.user) throw new Response('Unauthorized: sign in first', { status: 401 })
    if (!await loadLiveUser(session.user.id)) throw new Response('Unauthorized: account disabled', { status: 401 })
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
    await connection?.receive(message.text())
  },
  async close(peer) {
    const connection = await connections.get(peer)
    connection?.leave()
    connections.delete(peer)
  },
})
