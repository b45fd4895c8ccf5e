// Interposing a train description into a berth: headcode-like text up to 16 characters (the engine's
// limit; headcode form docs/sources.md §5); the sheet closes once it is done; a described berth can be cleared.
import { afterEach, describe, expect, it } from 'vitest'
import { mountSuspended } from '@nuxt/test-utils/runtime'
import PanelInterposeDialog from '~/components/panel/PanelInterposeDialog.vue'
import { DemoRun, MILO, TAM } from '../../support/live-fixtures'
import type { TestLiveServer } from '../../support/live-server'
import { goLive, signIn } from './helpers'

let server: TestLiveServer | null = null
afterEach(async () => {
  useLiveStore().disconnect()
  await server?.close()
  server = null
})

function branchHeldBy(user: typeof TAM) {
  const run = new DemoRun()
  run.areas = { main: null, branch: user }
  return run
}

describe('interpose dialog', () => {
  it('refuses text that is not headcode-like or too long, and sends nothing', async () => {
    signIn(TAM)
    const ctx = await goLive(branchHeldBy(TAM))
    server = ctx.server
    const w = await mountSuspended(PanelInterposeDialog, { props: { block: 'UM2' } })
    await w.find('[data-test="interpose-input"]').setValue('1F42; drop')
    await w.find('form').trigger('submit')
    expect(w.find('[data-test="interpose-error"]').text()).toBe('Use letters, digits, spaces and hyphens only, such as 1F42.')
    await w.find('[data-test="interpose-input"]').setValue('ABCDEFGHIJKLMNOPQ')
    await w.find('form').trigger('submit')
    expect(w.find('[data-test="interpose-error"]').text()).toBe('A description is at most 16 characters.')
    expect(server.commands()).toHaveLength(0)
  })

  it('sends the description in capitals, shows it in the berth once the server reports it, and closes', async () => {
    signIn(TAM)
    const ctx = await goLive(branchHeldBy(TAM))
    server = ctx.server
    const w = await mountSuspended(PanelInterposeDialog, { props: { block: 'UM2' } })
    await w.find('[data-test="interpose-input"]').setValue('2j01')
    await w.find('form').trigger('submit')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'interpose', block: 'UM2', description: '2J01' }])
    server.broadcast(ctx.run.interpose('UM2', '2J01'))
    expect(w.emitted('close')).toBeUndefined()
    server.broadcast({ type: 'command-result', id: server.commands()[0]!.id, ok: true })
    await expect.poll(() => w.emitted('close')?.length).toBe(1)
    expect(ctx.live.view.state.descriptions.UM2).toBe('2J01')
  })

  it('clears a described berth with its own, secondary button', async () => {
    signIn(TAM)
    const run = branchHeldBy(TAM)
    run.occupy('UM2')
    run.interpose('UM2', '1A40')
    const ctx = await goLive(run)
    server = ctx.server
    const w = await mountSuspended(PanelInterposeDialog, { props: { block: 'UM2' } })
    expect((w.find('[data-test="interpose-input"]').element as HTMLInputElement).value).toBe('1A40')
    expect(w.find('[data-test="interpose-submit"]').text()).toBe('Interpose')
    expect(w.find('[data-test="clear-berth"]').classes()).not.toContain('btn-primary')
    await w.find('[data-test="clear-berth"]').trigger('click')
    await expect.poll(() => server!.commands().map(c => c.command)).toEqual([{ action: 'interpose', block: 'UM2', description: '' }])
  })

  it('offers no Clear berth on an empty berth, and sends nothing for an empty field', async () => {
    signIn(TAM)
    const ctx = await goLive(branchHeldBy(TAM))
    server = ctx.server
    const w = await mountSuspended(PanelInterposeDialog, { props: { block: 'UM2' } })
    expect(w.find('[data-test="clear-berth"]').exists()).toBe(false)
    expect(w.find('[data-test="interpose-submit"]').text()).toBe('Interpose')
    expect(w.find('[data-test="interpose-submit"]').attributes('disabled')).toBeDefined()
    await w.find('form').trigger('submit')
    expect(server.commands()).toHaveLength(0)
  })

  it('gives a viewer no form', async () => {
    signIn(MILO)
    const ctx = await goLive(branchHeldBy(TAM))
    server = ctx.server
    const w = await mountSuspended(PanelInterposeDialog, { props: { block: 'UM2' } })
    expect(w.find('form').exists()).toBe(false)
    expect(w.find('[data-test="no-control-reason"]').text()).toContain('viewer')
  })
})
