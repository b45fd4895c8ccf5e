// Role-dependent controls (README "Roles"): only a signaller or admin holding the area works its
// signals and turnouts; others read who holds it; viewers get no controls at all. The panel talks to a
// test /live server over a real WebSocket; states come from the real engine on the demo layout.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import { flushPromises } from '@vue/test-utils'
import PanelSignalSheet from '~/components/panel/PanelSignalSheet.vue'
import PanelAreaBar from '~/components/panel/PanelAreaBar.vue'
import PanelTurnoutSheet from '~/components/panel/PanelTurnoutSheet.vue'
import PanelHandOverOffer from '~/components/panel/PanelHandOverOffer.vue'
import { ADA, DemoRun, MILO, RHEA, TAM } from '../../support/live-fixtures'
import type { TestLiveServer } from '../../support/live-server'
import { goLive, signIn } from './helpers'

let server: TestLiveServer | null = null
afterEach(async () => {
  useLiveStore().disconnect()
  await server?.close()
  server = null
})

function held(holders: Record<string, typeof TAM | null>) {
  const run = new DemoRun()
  run.areas = { main: null, branch: null, ...holders }
  return run
}

describe('signal control sheet', () => {
  it('offers hold / auto / clear to the holder, marks the current one, and sends the signal revision', async () => {
    signIn(TAM)
    const ctx = await goLive(held({ branch: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelSignalSheet, { props: { signal: 'SU1' } })
    const buttons = w.findAll('[data-test="override-controls"] button')
    expect(buttons.map(b => b.attributes('data-test'))).toEqual(['set-hold', 'set-auto', 'set-clear'])
    expect(w.find('[data-test="set-auto"]').attributes('aria-pressed')).toBe('true')
    expect(w.find('[data-test="set-hold"]').attributes('aria-pressed')).toBe('false')
    expect(w.find('[data-test="set-auto"]').text()).toContain('(current)')
    await w.find('[data-test="set-hold"]').trigger('click')
    await expect.poll(() => server!.commands().length).toBe(1)
    const sent = server.commands()[0]!
    expect(sent.command).toEqual({ action: 'set-override', signal: 'SU1', mode: 'hold', revision: 0 })
    expect(w.find('[data-test="command-pending"]').text()).toContain('sending')
    server.broadcast({ type: 'command-result', id: sent.id, ok: false, reason: 'Signal SU1 was changed meanwhile; look again and retry.' })
    await expect.poll(() => w.find('[data-test="command-refused"]').exists()).toBe(true)
    expect(w.find('[data-test="command-refused"]').text()).toContain('Signal SU1 was changed meanwhile')
  })

  it('follows the override the server reports and marks the new current one', async () => {
    signIn(TAM)
    const ctx = await goLive(held({ branch: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelSignalSheet, { props: { signal: 'SU1' } })
    server.broadcast(ctx.run.hold('SU1'))
    await expect.poll(() => w.find('[data-test="set-hold"]').attributes('aria-pressed')).toBe('true')
    expect(w.find('[data-test="sheet-aspect"]').text()).toContain('Danger')
  })

  it('shows another signaller who holds the area, and no controls', async () => {
    signIn(RHEA)
    const ctx = await goLive(held({ branch: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelSignalSheet, { props: { signal: 'SU1' } })
    expect(w.find('[data-test="override-controls"]').exists()).toBe(false)
    expect(w.find('[data-test="no-control-reason"]').text()).toBe('Tam Oakridge holds Branch & station; only the holder works this signal.')
  })

  it('gives a viewer the aspect but no controls', async () => {
    signIn(MILO)
    const ctx = await goLive(held({ branch: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelSignalSheet, { props: { signal: 'SU1' } })
    expect(w.find('[data-test="sheet-aspect"]').exists()).toBe(true)
    expect(w.findAll('button').map(b => b.attributes('data-test'))).toEqual(['sheet-close'])
    expect(w.find('[data-test="no-control-reason"]').text()).toContain('viewer')
  })

  it('holds the controls back while the panel is not live', async () => {
    signIn(TAM)
    const ctx = await goLive(held({ branch: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelSignalSheet, { props: { signal: 'SU1' } })
    expect(w.find('[data-test="override-controls"]').exists()).toBe(true)
    await server.close()
    server = null
    await expect.poll(() => w.find('[data-test="override-controls"]').exists()).toBe(false)
    expect(w.find('[data-test="no-control-reason"]').text()).toContain('Not connected')
  })
})

describe('turnouts', () => {
  it('explains to a signaller without the area why the turnout cannot be thrown', async () => {
    signIn(RHEA)
    const ctx = await goLive(held({ main: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelTurnoutSheet, { props: { turnout: 'T4' } })
    expect(w.find('[data-test="turnout-controls"]').exists()).toBe(false)
    expect(w.find('[data-test="no-control-reason"]').text()).toContain('Tam Oakridge holds Main line')
  })
})

describe('area bar', () => {
  it('lets a signaller take a free area and the holder release or hand it over', async () => {
    signIn(TAM)
    const ctx = await goLive(held({ main: TAM }))
    server = ctx.server
    const w = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    const main = w.find('[data-test="area-main"]')
    expect(main.find('[data-test="holder"]').text()).toBe('held by you')
    expect(main.find('[data-test="release"]').exists()).toBe(true)
    expect(main.findAll('[data-test="handover-to"] option').map(o => o.text())).toEqual(['Hand to…', 'Ada Wrenfield', 'Rhea Lintwhistle'])
    const branch = w.find('[data-test="area-branch"]')
    await branch.find('[data-test="take"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'take-area', area: 'branch' }])
    await main.find('[data-test="handover-to"]').setValue(String(RHEA.id))
    await main.find('form').trigger('submit')
    await expect.poll(() => server!.commands().length).toBe(2)
    expect(server.commands()[1]!.command).toEqual({ action: 'hand-over', area: 'main', to: RHEA.id })
  })

  it('counts a double tap on Take once, even when Release has taken its place between the taps', async () => {
    signIn(TAM)
    const ctx = await goLive(held({}))
    server = ctx.server
    const w = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    await w.find('[data-test="area-branch"] [data-test="take"]').trigger('click')
    await expect.poll(() => server!.commands().length).toBe(1)
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: true })
    server.broadcast(ctx.run.take(TAM, 'branch'))
    await expect.poll(() => w.find('[data-test="area-branch"] [data-test="release"]').exists()).toBe(true)
    await w.find('[data-test="area-branch"] [data-test="release"]').trigger('click')
    await flushPromises()
    await new Promise(resolve => setTimeout(resolve, 100))
    expect(server.commands().map(c => c.command)).toEqual([{ action: 'take-area', area: 'branch' }])
    // and a deliberate Release a moment later goes out
    await new Promise(resolve => setTimeout(resolve, 600))
    await w.find('[data-test="area-branch"] [data-test="release"]').trigger('click')
    await expect.poll(() => server!.commands().length).toBe(2)
  })

  it('shows the receiver of a hand-over a clear alert to accept, and sends the acceptance', async () => {
    signIn(RHEA)
    const run = held({ main: TAM })
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelHandOverOffer)
    expect(w.find('[data-test="handover-offers"]').exists()).toBe(false)
    server.broadcast(ctx.run.offer(TAM, 'main', RHEA))
    await expect.poll(() => w.find('[data-test="handover-offer-main"]').exists()).toBe(true)
    expect(w.find('[data-test="handover-offers"]').attributes('role')).toBe('alert')
    expect(w.find('[data-test="handover-offer-main"]').text()).toContain('Tam Oakridge wants to hand Main line over to you')
    await w.find('[data-test="accept-handover"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'accept-hand-over', area: 'main' }])
  })

  it('says why an area cannot be handed over when no other signaller is connected', async () => {
    signIn(TAM)
    const run = held({ main: TAM })
    run.operators = [TAM, MILO]
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    const main = w.find('[data-test="area-main"]')
    expect(main.find('[data-test="handover-to"]').exists()).toBe(false)
    expect(main.find('[data-test="handover-none"]').text()).toBe('To hand over, another signaller must be connected.')
  })

  it('shows others who holds an area, gives an admin force-release, and a viewer nothing to press', async () => {
    signIn(RHEA)
    const ctx = await goLive(held({ main: TAM }))
    server = ctx.server
    const asRhea = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    expect(asRhea.find('[data-test="area-main"] button').exists()).toBe(false)
    expect(asRhea.find('[data-test="area-main"] [data-test="area-note"]').text()).toBe('Held by Tam Oakridge: ask them to release or hand it over.')

    signIn(ADA)
    await flushPromises()
    const asAda = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    expect(asAda.find('[data-test="area-main"] [data-test="force-release"]').exists()).toBe(true)
    await asAda.find('[data-test="area-main"] [data-test="force-release"]').trigger('click')
    expect(server.commands()).toHaveLength(0) // the first tap only asks for confirmation
    await asAda.find('[data-test="area-main"] [data-test="force-release"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'force-release', area: 'main' }])

    signIn(MILO)
    await flushPromises()
    const asMilo = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    expect(asMilo.findAll('button')).toHaveLength(0)
    expect(asMilo.find('[data-test="area-main"] [data-test="holder"]').text()).toBe('held by Tam Oakridge')
  })
})

describe('area command results', () => {
  it('lets "done" go after a few seconds and keeps a refusal with its reason until the next action', async () => {
    signIn(TAM)
    const ctx = await goLive(held({}))
    server = ctx.server
    const w = await mountSuspended(PanelAreaBar, { props: { areas: ctx.run.layout.areas } })
    const live = useLiveStore()
    const record = (id: string, status: 'done' | 'refused', reason: string | null = null) => ({
      id, command: { action: 'take-area' as const, area: 'main' }, target: 'area:main', label: 'Take Main line', status, reason, at: Date.now(),
    })
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] })
    try {
      live.commands.unshift(record('c1', 'done'))
      await flushPromises()
      expect(w.find('[data-test="area-main"] [data-test="command-done"]').exists()).toBe(true)
      vi.advanceTimersByTime(4100)
      await flushPromises()
      await expect.poll(() => w.find('[data-test="area-main"] [data-test="command-done"]').exists()).toBe(false)

      live.commands.unshift(record('c2', 'refused', 'Rhea Lintwhistle took it first.'))
      await flushPromises()
      vi.advanceTimersByTime(60_000)
      await flushPromises()
      expect(w.find('[data-test="area-main"] [data-test="command-refused"]').text()).toContain('Rhea Lintwhistle took it first.')
    } finally {
      vi.useRealTimers()
    }
  })
})
