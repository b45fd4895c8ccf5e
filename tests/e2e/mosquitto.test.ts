import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt from 'mqtt'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { freePort, mosquittoPub, startMosquitto, startServer, type Running } from '../support/processes'

// Interoperability with a broker and a client nobody here wrote: Debian's mosquitto as the external broker
// (MQTT_URL) and mosquitto_pub as the device. A second Blockbell server from the same build uses them.
const PREFIX = 'blockbell/v1/wrenfold/'

describe('with Debian mosquitto as the external broker', () => {
  let broker: Running
  let server: Running & { url: string }
  let port: number
  let panel: LiveClient

  beforeAll(async () => {
    port = await freePort()
    broker = await startMosquitto(port)
    server = await startServer({ MQTT_URL: `mqtt://127.0.0.1:${port}`, BLOCKBELL_DB_NAME: 'blockbell_e2e', MQTT_PORT: '0' })
    const http = new SessionClient(server.url)
    await http.signIn(DEMO.viewer.email, DEMO.viewer.password)
    panel = await LiveClient.open(http.cookieHeader, server.url)
    await panel.subscribe('wrenfold')
  })
  afterAll(async () => {
    panel?.close()
    await server?.stop()
    await broker?.stop()
  })

  it('starts no broker of its own and takes detector events from mosquitto_pub', async () => {
    expect(server.output()).not.toMatch(/MQTT broker listening/)
    expect(server.output()).toMatch(new RegExp(`MQTT bridge connected to mqtt://127.0.0.1:${port}`))
    const change = panel.change(c => c.type === 'block' && c.block === 'FY1' && c.occupied)
    await mosquittoPub(port, `${PREFIX}detector/D13`, '1')
    await change
    const json = panel.change(c => c.type === 'block' && c.block === 'FY1' && !c.occupied, 3000)
    await mosquittoPub(port, `${PREFIX}detector/D13`, '{"occupied": false}')
    await json
  })

  it('reconnects after the broker restarts and publishes every indication again (retained)', async () => {
    await broker.stop()
    broker = await startMosquitto(port)
    // The new broker kept nothing; after the bridge reconnects, a decoder gets its aspect again.
    const decoder = await mqtt.connectAsync(`mqtt://127.0.0.1:${port}`)
    const retained = new Promise<string>(resolve => decoder.on('message', (_t, p) => resolve(String(p))))
    await new Promise(resolve => setTimeout(resolve, 2500))
    await decoder.subscribeAsync(`${PREFIX}signal/SF1`)
    expect(JSON.parse(await retained)).toHaveProperty('aspect')
    await decoder.endAsync()
    const change = panel.change(c => c.type === 'block' && c.block === 'FY2' && c.occupied)
    await mosquittoPub(port, `${PREFIX}detector/D14`, '1')
    await change
    await mosquittoPub(port, `${PREFIX}detector/D14`, '0')
  })
})
