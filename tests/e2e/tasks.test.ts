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

  const listed = async (id: number) => (await viewer.get(`/api/layouts/${layoutId}/tasks`)).body.tasks.find((t: { id: number }) => t.id === id)

  it('lets an admin change a task: its done log stays and the next due day follows the last done', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/tasks`, { title: 'Check the wiring joints under the goods yard', repeatDays: 30, dueOn: day(-3) })).body.id
    expect((await signaller.post(`/api/tasks/${id}/done`, { note: 'two joints resoldered' })).status).toBe(201)
    const change = { title: 'Check the wiring joints under the yard', repeatDays: 10, dueOn: null, assigneeId: signallerId, notes: 'take the inspection lamp' }
    for (const who of [viewer, signaller]) expect((await who.request('PUT', `/api/tasks/${id}`, change)).status).toBe(403)
    expect(await listed(id)).toMatchObject({ title: 'Check the wiring joints under the goods yard', repeatDays: 30 })
    const reply = await admin.request('PUT', `/api/tasks/${id}`, change)
    expect(reply.status, JSON.stringify(reply.body)).toBe(200)
    // done today, now every 10 days: next due in 10 days (shared/maintenance/tasks.ts, worked by hand)
    expect(await listed(id)).toMatchObject({ title: change.title, repeatDays: 10, dueOn: null, notes: change.notes, assignee: { id: signallerId }, doneCount: 1, state: 'ok', nextDue: day(10) })
    expect((await viewer.get(`/api/tasks/${id}/log`)).body.log).toMatchObject([{ note: 'two joints resoldered' }])
    // a one-off task already done stays done when its date moves
    expect((await admin.request('PUT', `/api/tasks/${id}`, { title: change.title, dueOn: day(5), repeatDays: null })).status).toBe(200)
    expect(await listed(id)).toMatchObject({ state: 'finished', nextDue: null, assignee: null })
  })

  it('changing a task names the field at fault, 404 for an unknown id, never a 500', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/tasks`, { title: 'Replace the platform lamps', repeatDays: 90 })).body.id
    const cases: [unknown, RegExp][] = [
      [{ title: ' ', repeatDays: 7 }, /^title: say what is to be done/],
      [{ title: 'Replace the platform lamps', dueOn: null, repeatDays: null }, /^dueOn: give a due date, a repeat interval or both/],
      [{ title: 'Replace the platform lamps', dueOn: '2026-02-30x' }, /^dueOn: a date as YYYY-MM-DD/],
      [{ title: 'Replace the platform lamps', repeatDays: 3651 }, /^repeatDays: at most 3,650 days/],
      [{ title: 'Replace the platform lamps', repeatDays: 7, assigneeId: 999999 }, /^assigneeId: no active account/],
      [{ title: 'Replace the platform lamps', repeatDays: 7, notes: 'n'.repeat(2001) }, /^notes: at most 2,000 characters/],
    ]
    for (const [body, message] of cases) {
      const reply = await admin.request('PUT', `/api/tasks/${id}`, body)
      expect(reply.status, JSON.stringify(body)).toBe(400)
      expect(reply.body.message).toMatch(message)
    }
    expect(await listed(id)).toMatchObject({ title: 'Replace the platform lamps', repeatDays: 90 })
    const unknown = await admin.request('PUT', '/api/tasks/999999', { title: 'Nothing', repeatDays: 7 })
    expect(unknown.status).toBe(404)
    expect(unknown.body.message).toMatch(/^id: no task with id 999999/)
    for (const bad of ['abc', '-1', '2147483648']) {
      const reply = await admin.request('PUT', `/api/tasks/${bad}`, { title: 'Nothing', repeatDays: 7 })
      expect(reply.status, bad).toBe(400)
      expect(reply.body.message, bad).toMatch(/^id: /)
    }
  })

  it('lets an admin remove a task with its done log, once; others are refused', async () => {
    const id = (await admin.post(`/api/layouts/${layoutId}/tasks`, { title: 'Dust the engine shed', repeatDays: 14 })).body.id
    expect((await signaller.post(`/api/tasks/${id}/done`, {})).status).toBe(201)
    expect((await signaller.post(`/api/tasks/${id}/done`, { note: 'roof too' })).status).toBe(201)
    expect(await listed(id)).toMatchObject({ doneCount: 2 })
    for (const who of [viewer, signaller]) expect((await who.request('DELETE', `/api/tasks/${id}`)).status).toBe(403)
    expect(await listed(id)).toBeDefined()
    const removed = await admin.request('DELETE', `/api/tasks/${id}`)
    expect(removed.status, JSON.stringify(removed.body)).toBe(200)
    expect(removed.body).toEqual({ deleted: id, doneEntries: 2 })
    expect(await listed(id)).toBeUndefined()
    expect((await viewer.get(`/api/tasks/${id}/log`)).status).toBe(404)
    const again = await admin.request('DELETE', `/api/tasks/${id}`)
    expect(again.status).toBe(404)
    expect(again.body.message).toMatch(/^id: no task with id/)
  })
})
