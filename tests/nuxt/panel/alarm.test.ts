// A signal passed at danger (README "Rules of operation"; docs/sources.md §1, GERT8000 S5 definition, as
// detected by the real engine): the banner names signal, block and train from the layout definition, a
// signaller acknowledges, and the acknowledgement shows everywhere.
import { afterEach, describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import PanelAlarmBanner from '~/components/panel/PanelAlarmBanner.vue'
import { DemoRun, MILO, TAM, spadRun } from '../../support/live-fixtures'
import type { TestLiveServer } from '../../support/live-server'
import { goLive, signIn } from './helpers'

let server: TestLiveServer | null = null
afterEach(async () => {
  useLiveStore().disconnect()
  await server?.close()
  server = null
})

describe('alarm banner', () => {
  it('names the signal, the block and the train, and says Blockbell is not a safety system', async () => {
    signIn(TAM)
    const { run, deltas } = spadRun()
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelAlarmBanner)
    expect(deltas.at(-1)!.changes.some(c => c.type === 'alarm')).toBe(true)
    const banner = w.find('[data-test="alarm-banner"]')
    expect(banner.attributes('role')).toBe('alert')
    expect(banner.find('[data-test="alarm-spad-1"]').text()).toContain(
      'Signal passed at danger: Quillbury up starter (SU2). Train 1F42 entered Wrenfold Junction up (UM3).',
    )
    expect(banner.find('[data-test="not-safety"]').text()).toContain('Blockbell is not a safety system')
    expect(banner.find('[data-test="mute"]').exists()).toBe(true)
  })

  it('lets a signaller acknowledge; once the server reports it, the banner goes and says who did it', async () => {
    signIn(TAM)
    const { run } = spadRun()
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelAlarmBanner)
    await w.find('[data-test="acknowledge"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'acknowledge', alarm: 'spad-1' }])
    const delta = run.event({ type: 'acknowledge', alarm: 'spad-1', by: String(TAM.id) })
    server.broadcast(delta)
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: true })
    await expect.poll(() => w.find('[data-test="alarm-banner"]').exists()).toBe(false)
    expect(w.find('[data-test="alarm-acknowledged"]').text()).toContain('Alarm at SU2 acknowledged by Tam Oakridge')
  })

  it('shows the alarm to a viewer without an acknowledge button', async () => {
    signIn(MILO)
    const { run } = spadRun()
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelAlarmBanner)
    expect(w.find('[data-test="alarm-spad-1"]').text()).toContain('Train 1F42')
    expect(w.find('[data-test="acknowledge"]').exists()).toBe(false)
    expect(w.text()).toContain('A signaller acknowledges alarms.')
  })

  it('names an undescribed train as such, and arrives by delta while the panel is live', async () => {
    signIn(TAM)
    const ctx = await goLive(new DemoRun())
    server = ctx.server
    const w = await mountSuspended(PanelAlarmBanner)
    expect(w.find('[data-test="alarm-banner"]').exists()).toBe(false)
    server.broadcast(ctx.run.occupy('UM2'))
    server.broadcast(ctx.run.hold('SU2'))
    server.broadcast(ctx.run.occupy('UM3'))
    await expect.poll(() => w.find('[data-test="alarm-spad-1"]').exists()).toBe(true)
    expect(w.find('[data-test="alarm-spad-1"]').text()).toContain('An undescribed train entered Wrenfold Junction up (UM3).')
  })
})
