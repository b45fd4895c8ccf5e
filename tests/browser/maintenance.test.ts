// The Maintenance screen in Debian's chromium on a touch tablet: record a cleaning by tapping the blocks'
// rows, see them return to "OK"; change and remove roster items and tasks (admin). Fails on any console error
// (hydration warnings included).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import sharp from 'sharp'
import { DEMO } from '../support/http-client'
import { openBrowser, screenshot, signInThroughForm, unexpectedConsoleErrors, type BrowserSession } from '../support/browser'

describe('Maintenance screen', () => {
  let browser: BrowserSession
  const consoleErrors: string[] = []
  beforeAll(async () => {
    browser = await openBrowser({ width: 1024, height: 768 })
    browser.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) consoleErrors.push(m.text()) })
  })
  afterAll(async () => { await browser?.close() })

  it('records a cleaning of two blocks picked by tapping their rows, loaded by URL', async () => {
    const { page } = browser
    await signInThroughForm(page, DEMO.signaller.email, DEMO.signaller.password)
    await page.waitForURL('**/panel')
    await page.goto('/maintenance')
    await expect.poll(() => page.getByTestId('maintenance-blocks').count()).toBe(1)
    await expect(page.getByTestId('cautions').textContent()).resolves.toMatch(/flammable/)
    await page.getByLabel(/^Pick DM1 /).click()
    await page.getByLabel(/^Pick DM2 /).click()
    await expect.poll(() => page.getByTestId('picked').textContent()).toContain('DM1, DM2')
    await screenshot(page, 'maintenance-1024x768')
    await page.getByTestId('record').click()
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Cleaning of DM1, DM2 recorded.')
    await expect.poll(() => page.getByTestId('maintenance-blocks').getByTestId('block-DM1').getAttribute('data-state')).toBe('ok')
    expect(await page.getByTestId('maintenance-blocks').getByTestId('block-DM1').textContent()).not.toContain('never')
    await expect.poll(() => page.getByTestId('cleanings').textContent()).toContain('DM1, DM2')
    await screenshot(page, 'maintenance-recorded-1024x768')
    expect(consoleErrors).toEqual([])
  })

  it('records a cleaning with a photo, shown as a thumbnail in the history', async () => {
    const { page } = browser
    await page.setViewportSize({ width: 1280, height: 800 })
    await page.goto('/maintenance')
    await expect.poll(() => page.getByTestId('maintenance-blocks').count()).toBe(1)
    // pick UM4 by tapping its track on the diagram, half-way along it
    const diagram = page.getByTestId('maintenance-diagram')
    await expect.poll(() => diagram.getByTestId('due-UM4').count()).toBe(1)
    const mid = await diagram.getByTestId('block-UM4').locator('polyline.bb-track').evaluate((line: SVGPolylineElement) => {
      const p = line.getPointAtLength(line.getTotalLength() / 2).matrixTransform(line.getScreenCTM()!)
      return { x: p.x, y: p.y }
    })
    await page.mouse.click(mid.x, mid.y)
    await expect.poll(() => page.getByTestId('picked').textContent()).toContain('UM4')
    await expect.poll(() => diagram.getByTestId('due-UM4').getAttribute('data-picked')).toBe('true')
    expect(await page.getByLabel(/^Pick UM4 /).isChecked()).toBe(true)
    // the overlay shows each block's state as the list does
    for (const block of ['UM1', 'FY1', 'DM1']) {
      const listed = await page.getByTestId('maintenance-blocks').getByTestId(`block-${block}`).getAttribute('data-state')
      expect(await diagram.getByTestId(`due-${block}`).getAttribute('data-state'), block).toBe(listed)
    }
    const photo = await sharp({ create: { width: 900, height: 600, channels: 3, background: '#7d6b4f' } }).jpeg().toBuffer()
    await page.getByTestId('record-cleaning').getByTestId('photo-input').setInputFiles({ name: 'um4-after.jpg', mimeType: 'image/jpeg', buffer: photo })
    await expect.poll(() => page.getByTestId('photo-thumbnail').count()).toBe(1)
    await screenshot(page, 'maintenance-photo-1280x800')
    await page.getByTestId('record').click()
    await expect.poll(() => page.getByRole('status').first().textContent()).toContain('Cleaning of UM4 recorded with 1 photo.')
    const shown = page.getByTestId('cleaning').first().getByTestId('cleaning-photo')
    await expect.poll(() => shown.evaluate((img: HTMLImageElement) => img.complete && img.naturalWidth)).toBe(320)
    await screenshot(page, 'maintenance-recorded-1280x800')
    expect(consoleErrors).toEqual([])
  })

  it('adds a locomotive with a photo to the roster and gives it the description it runs under (admin)', async () => {
    const admin = await openBrowser({ width: 1024, height: 768 })
    const errors: string[] = []
    admin.page.on('console', (m) => { if (m.type() === 'error' || /hydration/i.test(m.text())) errors.push(m.text()) })
    try {
      const { page } = admin
      await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
      await page.waitForURL('**/panel')
      await page.goto('/maintenance')
      await expect.poll(() => page.getByTestId('stock-form').count()).toBe(1)
      const name = `Class 08 shunter ${Date.now() % 100000}`
      await page.getByLabel('Name', { exact: true }).fill(name)
      await page.getByLabel('Number (optional)').fill('08 611')
      await page.getByLabel('Service every … running hours').fill('20')
      const photo = await sharp({ create: { width: 640, height: 480, channels: 3, background: '#2f4a3a' } }).png().toBuffer()
      await page.getByTestId('stock-form').getByTestId('photo-input').setInputFiles({ name: 'shunter.png', mimeType: 'image/png', buffer: photo })
      await expect.poll(() => page.getByTestId('stock-form').getByTestId('photo-thumbnail').count()).toBe(1)
      await page.getByTestId('stock-add').click()
      const row = page.locator('[data-test^="stock-"]', { hasText: name }).first()
      await expect.poll(() => row.count()).toBe(1)
      await expect.poll(() => row.textContent()).toContain('0.0 running hours')
      await row.getByLabel('Runs under train description').fill('6K21')
      await row.getByRole('button', { name: 'Set' }).click()
      await expect.poll(() => page.getByLabel('Runs under train description').last().inputValue()).toBe('6K21')
      await page.getByTestId('stock-roster').scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-1024x768')
      await page.setViewportSize({ width: 1280, height: 800 })
      await page.getByTestId('stock-roster').scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-1280x800')

      // a task due today shows as due, and the navigation counts it
      const title = `Dust the station buildings ${Date.now() % 100000}`
      await page.getByLabel('What is to be done').fill(title)
      await page.getByLabel('Due on').fill(new Date().toISOString().slice(0, 10))
      await page.getByTestId('task-add').click()
      const task = page.locator('[data-test^="task-"][data-state]', { hasText: title }).first()
      await expect.poll(() => task.getAttribute('data-state')).toBe('due')
      await page.goto('/maintenance')
      await expect.poll(() => page.getByTestId('due-count').textContent()).toMatch(/^\d+$/)
      const counted = Number(await page.getByTestId('due-count').textContent())
      expect(await page.getByTestId('due-count').getAttribute('aria-label')).toBe(`${counted} maintenance ${counted === 1 ? 'item' : 'items'} due`)
      await page.getByTestId('tasks').scrollIntoViewIfNeeded()
      await screenshot(page, 'tasks-1280x800')
      await page.locator('[data-test^="task-"][data-state]', { hasText: title }).first().getByRole('button', { name: 'Done' }).click()
      await expect.poll(() => page.locator('[data-test^="task-"][data-state]', { hasText: title }).first().getAttribute('data-state')).toBe('finished')
      await page.goto('/maintenance')
      await expect.poll(async () => (await page.getByTestId('due-count').count()) ? Number(await page.getByTestId('due-count').textContent()) : 0).toBe(counted - 1)
      expect(errors).toEqual([])
    } finally {
      await admin.close()
    }
  })

  it('changes a roster item and a task, and removes each after a confirmation a double tap acts on once (admin, touch 1024x768)', async () => {
    const admin = await openBrowser({ width: 1024, height: 768 }, { touch: true })
    const signaller = await openBrowser({ width: 1024, height: 768 }, { touch: true })
    try {
      const { page } = admin
      await signInThroughForm(page, DEMO.admin.email, DEMO.admin.password)
      await page.waitForURL('**/panel')
      const layouts = (await (await page.request.get('/api/layouts')).json()).layouts as { id: number, slug: string }[]
      const layoutId = layouts.find(l => l.slug === 'wrenfold')!.id
      const tag = Date.now() % 100000
      const make = async (path: string, data: unknown) => (await (await page.request.post(path, { data })).json()).id as number
      const kept = await make(`/api/layouts/${layoutId}/stock`, { name: `Prairie tank ${tag}`, number: '4561', serviceHours: 15, serviceKm: null })
      const gone = await make(`/api/layouts/${layoutId}/stock`, { name: `Parcels van ${tag}`, serviceHours: null, serviceKm: 50 })
      for (const note of ['buffers greased', 'roof repainted']) await page.request.post(`/api/stock/${gone}/services`, { data: { note } })
      const stale = await make(`/api/layouts/${layoutId}/stock`, { name: `Horsebox ${tag}`, serviceHours: null, serviceKm: null })
      const task = await make(`/api/layouts/${layoutId}/tasks`, { title: `Replace the yard lamp ${tag}`, repeatDays: 60 })
      const doneTask = await make(`/api/layouts/${layoutId}/tasks`, { title: `Clean the fiddle yard ${tag}`, repeatDays: 14 })
      await page.request.post(`/api/tasks/${doneTask}/done`, { data: { note: 'vacuumed' } })

      await page.goto('/maintenance')
      const row = page.getByTestId(`stock-${kept}`)
      await row.getByTestId(`stock-change-${kept}`).tap()
      const form = page.getByTestId(`stock-change-form-${kept}`)
      // the form starts from the item's values
      await expect.poll(() => form.getByLabel('Name', { exact: true }).inputValue()).toBe(`Prairie tank ${tag}`)
      expect(await form.getByLabel('Number (optional)').inputValue()).toBe('4561')
      expect(await form.getByLabel('Service every … running hours').inputValue()).toBe('15')
      await form.getByLabel('Name', { exact: true }).fill('')
      await form.getByTestId(`stock-save-${kept}`).tap()
      await expect.poll(() => form.textContent()).toContain('give the item a name')
      await form.getByLabel('Name', { exact: true }).fill(`Prairie tank ${tag} (overhauled)`)
      await form.getByLabel('Service every … running hours').fill('')
      await form.getByLabel('… or scale km').fill('30')
      await form.scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-change-1024x768', false)
      await form.getByTestId(`stock-save-${kept}`).tap()
      await expect.poll(() => row.getByRole('status').textContent()).toBe(`Prairie tank ${tag} (overhauled) saved.`)
      expect(await form.count()).toBe(0)
      expect(await row.textContent()).toContain('Service every 30 scale km')
      expect(await row.textContent()).toContain('4561')

      // removal: the confirmation names the item and what goes with it; a double tap sends one request
      const deletes: string[] = []
      page.on('request', (r) => { if (r.method() === 'DELETE') deletes.push(r.url()) })
      const goneRow = page.getByTestId(`stock-${gone}`)
      await goneRow.getByTestId(`stock-remove-${gone}`).tap()
      const confirm = page.getByTestId(`stock-remove-confirm-${gone}`)
      expect(await confirm.textContent()).toMatch(new RegExp(`Remove Parcels van ${tag} from the roster for good\\? Its 2 service records and the record of\\s+the train descriptions it ran under go with it`))
      await confirm.scrollIntoViewIfNeeded()
      await screenshot(page, 'roster-remove-1024x768', false)
      // every control of the row is at least 44 px either way (WCAG 2.2 2.5.8 asks 24; 44 is Blockbell's own)
      for (const button of [goneRow.getByTestId(`stock-change-${gone}`), goneRow.getByTestId(`stock-remove-${gone}`), confirm.getByRole('button', { name: 'Remove it' }), confirm.getByRole('button', { name: 'Keep it' })]) {
        const box = (await button.boundingBox())!
        expect(Math.min(box.width, box.height), await button.textContent() ?? '').toBeGreaterThanOrEqual(44)
      }
      const yes = (await confirm.getByTestId(`stock-remove-confirm-${gone}-yes`).boundingBox())!
      await page.touchscreen.tap(yes.x + yes.width / 2, yes.y + yes.height / 2)
      await page.touchscreen.tap(yes.x + yes.width / 2, yes.y + yes.height / 2)
      await expect.poll(() => goneRow.count()).toBe(0)
      expect(deletes.filter(u => u.endsWith(`/api/stock/${gone}`))).toHaveLength(1)
      expect(await page.getByTestId('stock-roster').getByRole('alert').count()).toBe(0)
      expect((await page.request.get(`/api/stock/${gone}/services`)).status()).toBe(404)
      expect(await row.count()).toBe(1)
      // removed by someone else while the confirmation was open: the row goes, with no error left behind
      await page.getByTestId(`stock-remove-${stale}`).tap()
      expect((await page.request.delete(`/api/stock/${stale}`)).status()).toBe(200)
      await page.getByTestId(`stock-remove-confirm-${stale}-yes`).tap()
      await expect.poll(() => page.getByTestId(`stock-${stale}`).count()).toBe(0)
      expect(await page.getByTestId('stock-roster').getByRole('alert').count()).toBe(0)

      // a task: change its interval (its history stays), then remove another with its done log
      const taskRow = page.getByTestId(`task-${task}`)
      await taskRow.getByTestId(`task-change-${task}`).tap()
      const taskForm = page.getByTestId(`task-change-form-${task}`)
      await expect.poll(() => taskForm.getByLabel('Repeat every … days').inputValue()).toBe('60')
      await taskForm.getByLabel('Repeat every … days').fill('21')
      await taskForm.getByTestId(`task-save-${task}`).tap()
      await expect.poll(() => taskRow.getByRole('status').textContent()).toBe('Task saved.')
      expect(await taskRow.textContent()).toContain('every 21 days')
      const doneRow = page.getByTestId(`task-${doneTask}`)
      await doneRow.getByTestId(`task-remove-${doneTask}`).tap()
      const taskConfirm = page.getByTestId(`task-remove-confirm-${doneTask}`)
      expect(await taskConfirm.textContent()).toContain(`Remove the task “Clean the fiddle yard ${tag}” for good? The one entry of its done log goes with it.`)
      await taskConfirm.scrollIntoViewIfNeeded()
      await screenshot(page, 'task-remove-1024x768', false)
      const taskYes = (await taskConfirm.getByTestId(`task-remove-confirm-${doneTask}-yes`).boundingBox())!
      await page.touchscreen.tap(taskYes.x + taskYes.width / 2, taskYes.y + taskYes.height / 2)
      await page.touchscreen.tap(taskYes.x + taskYes.width / 2, taskYes.y + taskYes.height / 2)
      await expect.poll(() => doneRow.count()).toBe(0)
      expect(deletes.filter(u => u.endsWith(`/api/tasks/${doneTask}`))).toHaveLength(1)
      expect(await taskRow.count()).toBe(1)
      await screenshot(page, 'maintenance-admin-1024x768')

      // a signaller sees the roster and the tasks, without these controls
      await signInThroughForm(signaller.page, DEMO.signaller.email, DEMO.signaller.password)
      await signaller.page.waitForURL('**/panel')
      await signaller.page.goto('/maintenance')
      await expect.poll(() => signaller.page.getByTestId(`stock-${kept}`).count()).toBe(1)
      await expect.poll(() => signaller.page.getByTestId(`task-${task}`).count()).toBe(1)
      expect(await signaller.page.locator('[data-test^="stock-change-"], [data-test^="stock-remove-"], [data-test^="task-change-"], [data-test^="task-remove-"]').count()).toBe(0)
      // the 400 is the save with no name (shown beside the field), the 404 the item removed meanwhile
      expect(unexpectedConsoleErrors(admin, [400, 404])).toEqual([])
      expect(unexpectedConsoleErrors(signaller)).toEqual([])
    } finally {
      await admin.close()
      await signaller.close()
    }
  })
})
