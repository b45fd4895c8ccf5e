// Maintenance tasks and the due count through the API of the built server (demo layout Wrenfold Junction).
import { beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import type { SessionClient } from '../support/http-client'
import { BASE_URL, signedIn } from '../support/http-client'

await setup({ host: BASE_URL })

const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10)

describe('maintenance tasks API', () => {
  let viewer: SessionClient
  let signaller: SessionClient
  let admin: SessionClient
  let layoutId: number
  let signallerId: number
  beforeAll(async () => {
    viewer = await signedIn('viewer')
    signaller = await signedIn('signaller')
    admin = await signedIn('admin')
    layoutId = (await viewer.get('/api/layouts')).body.layouts.find((l: { slug: string }) => l.slug === 'wrenfold').id
    signallerId = (await signaller.get('/api/auth/me')).body.user.id
  })

  it('lets an admin add a task for someone, a signaller mark it done with a note, a viewer read its history', async () => {
    const count = async () => (await viewer.get('/api/maintenance/due')).body.count as number
    const before = await count()
    expect((await signaller.post(`/api/layouts/${layoutId}/tasks`, { title: 'Replace the signal box lamp', dueOn: day(-1) })).status).toBe(403)
    const created = await admin.post(`/api/layouts/${layoutId}/tasks`, { title: 'Replace the signal box lamp', dueOn: day(-1), assigneeId: signallerId, repeatDays: 30 })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const id = created.body.id
    let task = (await viewer.get(`/api/layouts/${layoutId}/tasks`)).body.tasks.find((t: { id: number }) => t.id === id)
    expect(task).toMatchObject({ state: 'due', nextDue: day(-1), assignee: { id: signallerId }, repeatDays: 30 })
    expect(await count()).toBe(before + 1)
    expect((await viewer.post(`/api/tasks/${id}/done`, {})).status).toBe(403)
    expect((await signaller.post(`/api/tasks/${id}/done`, { note: 'warm white LED fitted' })).status).toBe(201)
    task = (await viewer.get(`/api/layouts/${layoutId}/tasks`)).body.tasks.find((t: { id: number }) => t.id === id)
    // repeats 30 days after today's "done"
    expect(task).toMatchObject({ state: 'ok', nextDue: day(30) })
    expect(await count()).toBe(before)
    expect((await viewer.get(`/api/tasks/${id}/log`)).body.log).toMatchObject([{ note: 'warm white LED fitted', by: expect.any(String) }])
  })

  it('names the field at fault for bad input, never a 500', async () => {
    const cases: [unknown, RegExp][] = [
      [{}, /^title: /],
      [{ title: 'Dust the goods shed' }, /^dueOn: give a due date, a repeat interval or both/],
      [{ title: 'Dust the goods shed', dueOn: '31/12/2026' }, /^dueOn: a date as YYYY-MM-DD/],
      [{ title: 'Dust the goods shed', repeatDays: 0 }, /^repeatDays: at least 1 day/],
      [{ title: 'Dust the goods shed', repeatDays: 1.5 }, /^repeatDays: a whole number of days/],
      [{ title: 'Dust the goods shed', repeatDays: 7, assigneeId: 999999 }, /^assigneeId: no active account/],
    ]
    for (const [body, message] of cases) {
      const reply = await admin.post(`/api/layouts/${layoutId}/tasks`, body)
      expect(reply.status, JSON.stringify(body)).toBe(400)
      expect(reply.body.message).toMatch(message)
    }
  })
})
