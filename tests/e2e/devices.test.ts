import { describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt from 'mqtt'
import { BASE_URL, signedIn, unique } from '../support/http-client'

await setup({ host: BASE_URL })
const MQTT_URL = process.env.BLOCKBELL_TEST_MQTT_URL ?? 'mqtt://127.0.0.1:18839'
const connect = (username: string, password: string) => mqtt.connectAsync(MQTT_URL, { username, password, reconnectPeriod: 0, connectTimeout: 3000 })

describe('devices (admin)', () => {
  it('adds a device that can then sign in to the broker; disabling it shuts it out', async () => {
    const admin = await signedIn('admin')
    const username = `board-${unique()}`
    const created = await admin.post('/api/devices', { username, name: 'Quillbury up platform detectors', password: 'board-password-1' })
    expect(created.status).toBe(201)
    expect(JSON.stringify(created.body)).not.toMatch(/scrypt|passwordHash/)
    const client = await connect(username, 'board-password-1')
    await client.endAsync()
    await expect(connect(username, 'wrong-password-1')).rejects.toThrow()
    expect((await admin.patch(`/api/devices/${created.body.device.id}`, { disabled: true })).body.device.disabled).toBe(true)
    await expect(connect(username, 'board-password-1')).rejects.toThrow()
    expect((await admin.get('/api/devices')).body.devices.map((d: { username: string }) => d.username)).toContain(username)
  })

  it('refuses a bad username, naming the field', async () => {
    const admin = await signedIn('admin')
    const reply = await admin.post('/api/devices', { username: 'Has Spaces', name: 'x', password: 'board-password-1' })
    expect(reply.status).toBe(400)
    expect(reply.body.message).toMatch(/^username: /)
  })
})
