// The whole Panel screen on the demo layout, connected over a real WebSocket to a test /live server.
import { afterEach, describe, expect, it } from 'vitest'
import { flushPromises } from '@vue/test-utils'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import PanelScreen from '~/components/panel/PanelScreen.vue'
import AppThemeButton from '~/components/app/AppThemeButton.vue'
import { DEMO_RUN_START, DemoRun, MILO, SLUG, TAM, spadRun } from '../../support/live-fixtures'
import type { TestLiveServer } from '../../support/live-server'
import { goLive, signIn } from './helpers'

let server: TestLiveServer | null = null
afterEach(async () => {
  useLiveStore().disconnect()
  await server?.close()
  server = null
  document.documentElement.classList.remove('light')
  localStorage.clear()
})

describe('Panel screen', () => {
  it('shows a viewer the live layout with no controls anywhere', async () => {
    signIn(MILO)
    const { run } = spadRun()
    run.areas = { main: TAM, branch: null }
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
    expect(w.find('[data-test="panel-title"]').text()).toBe('Wrenfold Junction')
    expect(w.find('[data-test="connection"]').attributes('data-state')).toBe('live')
    expect(w.find('[data-test="alarm-banner"]').exists()).toBe(true)
    expect(w.find('[data-test="acknowledge"]').exists()).toBe(false)
    expect(w.find('[data-test="area-bar"]').findAll('button')).toHaveLength(0)
    await w.find('[data-test="signal-SU3"]').trigger('click')
    expect(w.find('[data-test="signal-sheet"]').exists()).toBe(true)
    expect(w.find('[data-test="override-controls"]').exists()).toBe(false)
    await w.find('[data-test="turnout-T4"]').trigger('click')
    expect(w.find('[data-test="turnout-sheet"] [data-test="turnout-controls"]').exists()).toBe(false)
    await w.find('[data-test="berth-UM2"]').trigger('click')
    expect(w.find('[data-test="interpose-dialog"] form').exists()).toBe(false)
    expect(server.commands()).toHaveLength(0)
  })

  it('opens a turnout\'s sheet at a tap of its holder without throwing it; the sheet\'s button throws it, against the turnout revision', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.areas = { main: TAM, branch: null }
    run.hold('SU3') // SU3 reads over T4 (in UM4): held, T4 is free to throw
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
    const revision = run.state.turnoutRevisions.T4
    expect(revision).toBe(1) // reported normal once at start-up
    await w.find('[data-test="turnout-T4"]').trigger('click')
    expect(w.find('[data-test="turnout-sheet"]').exists()).toBe(true)
    await flushPromises()
    expect(server.commands()).toEqual([])
    expect(w.find('[data-test="set-normal"]').attributes('disabled')).toBeDefined() // where it lies now
    await w.find('[data-test="set-reverse"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'set-turnout', turnout: 'T4', position: 'reverse', revision }])
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: true })
    // the server's answer only means the request went out: still normal, shown as asked for
    await expect.poll(() => w.find('[data-test="throw-waiting"]').exists()).toBe(true)
    expect(w.find('[data-test="turnout-T4"]').attributes('data-position')).toBe('normal')
    expect(w.find('[data-test="turnout-T4"] [data-test="pending-ring"]').exists()).toBe(true)
    server.broadcast(run.event({ type: 'turnout', turnout: 'T4', position: 'reverse' }))
    await expect.poll(() => w.find('[data-test="turnout-T4"]').attributes('data-position')).toBe('reverse')
    expect(w.find('[data-test="throw-waiting"]').exists()).toBe(false)
    expect(w.find('[data-test="turnout-T4"] [data-test="pending-ring"]').exists()).toBe(false)
  })

  it('opens a signal sheet and closes it with Escape', async () => {
    signIn(TAM)
    const ctx = await goLive()
    server = ctx.server
    const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
    await w.find('[data-test="signal-SU1"]').trigger('keydown', { key: 'Enter' })
    expect(w.find('[data-test="signal-sheet"]').exists()).toBe(true)
    window.dispatchEvent(new KeyboardEvent('keydown', { key: 'Escape' }))
    await expect.poll(() => w.find('[data-test="signal-sheet"]').exists()).toBe(false)
  })

  it('shows the fast clock, offline controllers, operators and the feed', async () => {
    signIn(TAM)
    // started 30 real minutes ago at 4:1 from 06:00 -> 08:00 model time (docs/sources.md §6 arithmetic), by
    // the server's clock: the fixture's server clock is far from this machine's, so only a panel that works
    // from the snapshot's server time shows 08:00.
    const run = new DemoRun({ session: { id: 3, name: 'Evening running', startedAt: DEMO_RUN_START - 30 * 60_000, fastClockRatio: 4, fastClockStart: '06:00' } })
    run.devices = { 'board-up': { online: true, at: run.at }, 'board-branch': { online: false, at: run.at } }
    run.areas = { main: TAM, branch: null }
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
    expect(w.find('[data-test="model-time"]').text()).toBe('08:00')
    expect(w.find('[data-test="fast-clock"]').text()).toContain('Evening running')
    expect(w.find('[data-test="device-offline-board-branch"]').exists()).toBe(true)
    expect(w.find('[data-test="device-offline-board-up"]').exists()).toBe(false)
    expect(w.find('[data-test="operators"]').text()).toContain('Tam Oakridge')
    expect(w.find('[data-test="operators"]').text()).toContain('holds Main line')
    expect(w.find('[data-test="feed"]').text()).toContain('Tam Oakridge took Main line')
  })

  it('switches the whole app to the light theme and remembers it; the button shows the theme in use and names the next', async () => {
    const w = await mountSuspended(AppThemeButton)
    expect(document.documentElement.classList.contains('light')).toBe(false)
    expect(w.find('[data-test="theme-now"]').text()).toBe('Dark')
    expect(w.find('[data-test="theme-next"]').text()).toBe('Light')
    expect(w.attributes('aria-label')).toBe('Theme: dark. Switch to light')
    await w.trigger('click')
    expect(document.documentElement.classList.contains('light')).toBe(true)
    expect(localStorage.getItem('blockbell-theme')).toBe('light')
    expect(w.find('[data-test="theme-now"]').text()).toBe('Light')
    expect(w.find('[data-test="theme-next"]').text()).toBe('Dark')
    expect(w.attributes('aria-label')).toBe('Theme: light. Switch to dark')
  })

  it('says when it is not live and keeps the last state on screen', async () => {
    signIn(TAM)
    const run = new DemoRun()
    run.occupy('UM2')
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelScreen, { props: { slug: SLUG } })
    await server.close()
    server = null
    await expect.poll(() => w.find('[data-test="stale"]').exists()).toBe(true)
    expect(w.find('[data-test="connection"]').text()).toMatch(/Reconnecting|Offline/)
    expect(w.find('[data-test="block-UM2"]').attributes('data-occupied')).toBe('true')
  })
})
