// Shared set-up for the panel component tests: a signed-in person and the live store connected to a
// test /live server over a real WebSocket.
import { expect } from 'vitest'
import { useState } from '#imports'
import type { LiveUser } from '#shared/live/protocol'
import { DemoRun, SLUG } from '../../support/live-fixtures'
import { startLiveServer, type TestLiveServer } from '../../support/live-server'

export function signIn(user: LiveUser | null) {
  useState('nuxt-session').value = user
    ? { user: { id: user.id, email: `${user.name.split(' ')[0]!.toLowerCase()}@fernhollow.example`, name: user.name, role: user.role }, loggedInAt: Date.now() }
    : null
}

/** Starts a server for `run`, connects the store to it and waits until the panel is live. */
export async function goLive(run: DemoRun = new DemoRun()): Promise<{ run: DemoRun, server: TestLiveServer, live: ReturnType<typeof useLiveStore> }> {
  const server = await startLiveServer(run)
  const live = useLiveStore()
  live.connect(SLUG, server.socketFactory)
  await expect.poll(() => live.connection).toBe('live')
  return { run, server, live }
}
