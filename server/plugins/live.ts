// Starts the live side once per server process: the MQTT broker (or the bridge to an external one), the
// layout runtimes and the journal. Closed with Nitro, so a dev reload frees the broker's port.
export default defineNitroPlugin((nitroApp) => {
  if (process.env.BLOCKBELL_LIVE === '0') return
  useLive().whenReady().catch((error: Error) => console.error(`[blockbell] live service failed to start: ${error.message}`))
  nitroApp.hooks.hook('close', closeLive)
})
