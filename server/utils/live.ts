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

/**
 * Several processes: does registered work (`LiveService.handleOwnerWork`) on the process that runs the
 * layout, for an HTTP request that landed here. The owner's refusal comes back as the same HTTP error; no
 * answer in time is a 503 that says the work may or may not have been done.
 */
export async function atLayoutOwner<T>(slug: string, name: string, input: unknown, whatToCheck: string): Promise<T> {
  let answer
  try {
    answer = await useLive().askOwner(slug, name, input)
  } catch {
    throw createError({ statusCode: 503, message: `No answer from the server that runs ${slug} (it may be changing over to another server). ${whatToCheck}` })
  }
  if (answer.ok) return answer.value as T
  throw createError({ statusCode: answer.statusCode, message: answer.message, data: answer.data })
}
