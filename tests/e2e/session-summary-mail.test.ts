// When an operating session ends, the people who operated in it get its summary by e-mail, through the
// local fake mail server; the figures in the mail are the session review's own.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { setup } from '@nuxt/test-utils/e2e'
import mqtt, { type MqttClient } from 'mqtt'
import { BASE_URL, DEMO, signedIn, type SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { keptMail, mailTo, waitForMail } from '../support/mail'

await setup({ host: BASE_URL })

const MQTT_URL = `mqtt://127.0.0.1:${process.env.BLOCKBELL_TEST_MQTT_PORT ?? 18839}`
const DEVICE = { username: 'fake-layout', password: process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo' }
const PREFIX = 'blockbell/v1/wrenfold/'
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

let admin: SessionClient
let rhea: LiveClient
let device: MqttClient

async function endRunning() {
  const list = await admin.get('/api/sessions?layout=wrenfold')
  for (const s of list.body.sessions) if (!s.endedAt) await admin.post(`/api/sessions/${s.id}/end`)
}

beforeAll(async () => {
  admin = await signedIn('admin')
  device = await mqtt.connectAsync(MQTT_URL, { ...DEVICE, clientId: 'summary-mail-test-device' })
  await endRunning()
  rhea = await LiveClient.as('signaller2')
})
afterAll(async () => {
  await endRunning()
  rhea?.close()
  await device?.endAsync()
})

describe('the session summary mail', () => {
  it('goes to whoever started, ended or operated in the session, once each, with the review\'s figures and a link to it', async () => {
    const before = { admin: mailTo(DEMO.admin.email).length, rhea: mailTo(DEMO.signaller2.email).length }
    const others = [DEMO.signaller.email, DEMO.viewer.email].map(e => mailTo(e).length)
    const name = `Summary night ${Date.now()}`
    const started = await admin.post('/api/sessions', { layout: 'wrenfold', name, fastClockRatio: 1 })
    expect(started.status, JSON.stringify(started.body)).toBe(201)
    const id = started.body.id as number

    // Rhea operates: takes and gives back the Branch; a train stands on BR for a moment
    expect(await rhea.command({ action: 'take-area', area: 'branch' })).toMatchObject({ ok: true })
    await device.publishAsync(`${PREFIX}detector/D11`, '1')
    await sleep(300)
    await device.publishAsync(`${PREFIX}detector/D11`, '0')
    await sleep(300)
    expect(await rhea.command({ action: 'release-area', area: 'branch' })).toMatchObject({ ok: true })
    await sleep(600) // the journal writes in batches
    expect((await admin.post(`/api/sessions/${id}/end`)).status).toBe(200)

    const review = (await admin.get(`/api/sessions/${id}`)).body.session.summary
    for (const [email, seen] of [[DEMO.admin.email, before.admin], [DEMO.signaller2.email, before.rhea]] as const) {
      const mail = await waitForMail(email, { count: seen + 1, subject: /^Session summary:/ })
      expect(mail.text).toContain(`the session "${name}" on Wrenfold Junction has ended`)
      expect(mail.text).toContain(`Trains: ${review.trains.length}`)
      expect(mail.text).toContain(`Signals passed at danger: ${review.dangerPasses.length}`)
      expect(mail.text).toContain(`Detector dropouts: ${review.dropouts.reduce((n: number, d: { count: number }) => n + d.count, 0)}`)
      expect(mail.text).toContain(`/sessions/${id}`)
      expect(mail.html).toContain('Review the session')
    }
    await sleep(500)
    // once each, and nothing to those who did not take part
    expect(mailTo(DEMO.admin.email).filter(m => m.text.includes(name))).toHaveLength(1)
    expect(mailTo(DEMO.signaller2.email).filter(m => m.text.includes(name))).toHaveLength(1)
    expect([DEMO.signaller.email, DEMO.viewer.email].map(e => mailTo(e).length)).toEqual(others)
    expect(keptMail().filter(m => m.text.includes(name))).toHaveLength(2)
  })
})
