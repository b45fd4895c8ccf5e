import type { User as SessionUser } from '#auth-utils'
import type { StartSessionBody } from '#shared/schemas/session'

// Starts the live side once per server process: the MQTT broker (or the bridge to an external one), the
// layout runtimes and the journal. Closed with Nitro, so a dev reload frees the broker's port.
export default defineNitroPlugin((nitroApp) => {
  if (process.env.BLOCKBELL_LIVE === '0') return
  const live = useLive()
  // Several processes: what a request on another process asks of the layout's owner (this one, when it is).
  live.handleOwnerWork<{ user: SessionUser, body: StartSessionBody }>(SESSION_START_WORK, ({ user, body }) => startSessionHere(user, body))
  live.handleOwnerWork<{ user: SessionUser, id: number }>(SESSION_END_WORK, ({ user, id }) => endSessionHere(user, id))
  live.whenReady().catch((error: Error) => console.error(`[blockbell] live service failed to start: ${error.message}`))
  nitroApp.hooks.hook('close', closeLive)
})
