// The turnout's sheet and lock mark: a locked turnout says why and what to do, its mark follows the state
// live, a throw waits for the turnout's report, and an admin's forced throw asks first. Locking rule:
// 49 CFR 236.207 / 236.314 [P], detector locking [M] (REFERENCES.md §10). States come from the real runtime.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import { flushPromises } from '@vue/test-utils'
import PanelScreen from '~/components/panel/PanelScreen.vue'
import { ADA, DemoRun, MILO, SLUG, TAM } from '../../support/live-fixtures'
import type { TestLiveServer } from '../../support/live-server'
import { goLive, signIn } from './helpers'

let server: TestLiveServer | null = null
afterEach(async () => {
  vi.useRealTimers()
  useLiveStore().disconnect()
  await server?.close()
  server = null
})

async function panel(run: DemoRun) {
  const ctx = await goLive(run)
  server = ctx.server
  const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
  return { w, server: ctx.server }
}

describe('a locked turnout on the Panel', () => {
  it('carries a lock mark while SU3 reads over T4, says why and what to do, and frees it live when SU3 is held', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.areas = { main: TAM, branch: null }
    const { w, server } = await panel(run)
    expect(w.find('[data-test="lock-T4"]').attributes('data-reason')).toBe('route')
    await w.find('[data-test="turnout-T4"]').trigger('click')
    expect(w.find('[data-test="lock-reason"]').text()).toContain('T4 is locked: SU3 reads over it at proceed — hold SU3 first')
    expect(w.find('[data-test="lock-advice"]').text()).toContain('Set Wrenfold up main (SU3) to hold')
    expect(w.find('[data-test="set-reverse"]').attributes('disabled')).toBeDefined()
    server.broadcast(run.hold('SU3'))
    await expect.poll(() => w.find('[data-test="lock-T4"]').exists()).toBe(false)
    expect(w.find('[data-test="lock-reason"]').exists()).toBe(false)
    expect(w.find('[data-test="set-reverse"]').attributes('disabled')).toBeUndefined()
    // a train on UM4 locks it again, by occupancy this time
    server.broadcast(run.occupy('UM4'))
    await expect.poll(() => w.find('[data-test="lock-T4"]').attributes('data-reason')).toBe('occupied')
    expect(w.find('[data-test="lock-reason"]').text()).toContain('T4 is locked: UM4 is occupied')
    expect(w.find('[data-test="lock-advice"]').text()).toContain('Wait until it has cleared the block')
  })

  it('shows a viewer the lock and its reason, and no controls', async () => {
    signIn(MILO)
    const run = new DemoRun()
    run.occupy('UM4')
    const { w } = await panel(run)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    expect(w.find('[data-test="lock-reason"]').text()).toContain('UM4 is occupied')
    expect(w.find('[data-test="turnout-controls"]').exists()).toBe(false)
    expect(w.find('[data-test="force-reverse"]').exists()).toBe(false)
  })
})

describe('a throw waiting for its report', () => {
  it('says so when the turnout has not reported within 5 seconds', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.areas = { main: TAM, branch: null }
    run.hold('SU3')
    const { w, server } = await panel(run)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] })
    await w.find('[data-test="set-reverse"]').trigger('click')
    await expect.poll(() => server.commands().length).toBe(1)
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: true })
    await expect.poll(() => w.find('[data-test="throw-waiting"]').exists()).toBe(true)
    vi.advanceTimersByTime(4000)
    await flushPromises()
    expect(w.find('[data-test="throw-no-report"]').exists()).toBe(false)
    vi.advanceTimersByTime(1100)
    await flushPromises()
    expect(w.find('[data-test="throw-no-report"]').text()).toContain('No report from T4 within 5 seconds')
    expect(w.find('[data-test="turnout-T4"]').attributes('data-position')).toBe('normal')
  })

  it('drops the wait when the server refuses the throw, and shows the reason', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.areas = { main: TAM, branch: null }
    run.hold('SU3')
    const { w, server } = await panel(run)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    await w.find('[data-test="set-reverse"]').trigger('click')
    await expect.poll(() => server.commands().length).toBe(1)
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: false, reason: 'T4 is locked: UM4 is occupied' })
    await expect.poll(() => w.find('[data-test="command-refused"]').exists()).toBe(true)
    expect(w.find('[data-test="command-refused"]').text()).toContain('T4 is locked: UM4 is occupied')
    expect(w.find('[data-test="throw-waiting"]').exists()).toBe(false)
    expect(w.find('[data-test="turnout-T4"] [data-test="pending-ring"]').exists()).toBe(false)
  })
})

describe('forcing a locked turnout', () => {
  it('is offered to an admin only, asks first, and sends force-turnout only once confirmed', async () => {
    signIn(ADA)
    const run = new DemoRun()
    run.occupy('UM4')
    const { w, server } = await panel(run)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    await w.find('[data-test="force-reverse"]').trigger('click')
    expect(w.find('[data-test="force-confirm"]').text()).toContain('Force T4 to reverse although it is locked?')
    await w.find('[data-test="force-no"]').trigger('click')
    expect(w.find('[data-test="force-confirm"]').exists()).toBe(false)
    await flushPromises()
    expect(server.commands()).toEqual([])
    await w.find('[data-test="force-reverse"]').trigger('click')
    await w.find('[data-test="force-yes"]').trigger('click')
    await expect.poll(() => server.commands().map(c => c.command)).toEqual([
      { action: 'force-turnout', turnout: 'T4', position: 'reverse', revision: run.state.turnoutRevisions.T4 },
    ])
  })

  it('is not offered to a signaller, even the holder', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.areas = { main: TAM, branch: null }
    run.occupy('UM4')
    const { w } = await panel(run)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    expect(w.find('[data-test="lock-reason"]').exists()).toBe(true)
    expect(w.find('[data-test="force-reverse"]').exists()).toBe(false)
  })
})

describe('a turnout reported moving under a lock', () => {
  it('raises the alarm banner naming the turnout and the train, and marks its block', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.occupy('UM4')
    run.interpose('UM4', '1F42')
    const { w, server } = await panel(run)
    server.broadcast(run.event({ type: 'turnout', turnout: 'T4', position: 'reverse' }))
    await expect.poll(() => w.find('[data-test="alarm-banner"]').exists()).toBe(true)
    expect(w.find('[data-test="alarm-banner"]').text()).toContain('Turnout T4 moved while locked: Up departure (UM4) was occupied by 1F42.')
    expect(w.find('[data-test="acknowledge"]').exists()).toBe(true)
    expect(w.find('[data-test="feed"]').text()).toContain('Turnout T4 moved while locked')
  })
})
