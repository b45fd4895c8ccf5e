import { LiveService, liveSettings } from '../live/service'

let service: LiveService | undefined

/** The process's live service (broker, bridge, layout runtimes, panel hub); started by the live plugin. */
export function useLive(): LiveService {
  service ??= new LiveService(useDatabase(), liveSettings())
  return service
}

/** The live service when this process runs one (never starts it). */
export function runningLive(): LiveService | undefined {
  return service
}

export async function closeLive(): Promise<void> {
  const running = service
  service = undefined
  await running?.close()
}

/** The live service when this process runs one (not with BLOCKBELL_LIVE=0): saves tell it to follow. */
export function liveLayouts(): LiveService | undefined {
  return process.env.BLOCKBELL_LIVE === '0' ? undefined : useLive()
}
