import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { QueryTypes } from 'sequelize'
import mqtt, { type MqttClient } from 'mqtt'
import { seedDemoData } from '../../server/database/seed'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { connectWithoutModels, startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freePort, startServer, type Running } from '../support/processes'

// The whole stack with PostgreSQL stopped for a while during a run of detector events: the panel keeps
// working, and once the database is back the journal holds every event, in order, none twice.
const PREFIX = 'blockbell/v1/wrenfold/'
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

describe('PostgreSQL outage during a run of events', () => {
  let pg: ThrowawayPostgres
  let server: Running & { url: string }
  let device: MqttClient
  let panel: LiveClient

  beforeAll(async () => {
    pg = await startThrowawayPostgres({ database: 'blockbell_outage' })
    const db = await pg.openMigrated()
    await seedDemoData(db)
    await db.sequelize.close()
    const mqttPort = await freePort()
    server = await startServer({
      BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
      BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password, MQTT_PORT: String(mqttPort),
      BLOCKBELL_DETECTOR_DEBOUNCE_MS: '0', // every message in the journal as it came (no dropout merging)
    })
    device = await mqtt.connectAsync(`mqtt://127.0.0.1:${mqttPort}`, { username: 'fake-layout', password: 'fake-layout-demo' })
    const http = new SessionClient(server.url)
    await http.signIn(DEMO.viewer.email, DEMO.viewer.password)
    panel = await LiveClient.open(http.cookieHeader, server.url)
    await panel.subscribe('wrenfold')
  })
  afterAll(async () => {
    panel?.close()
    await device?.endAsync()
    await server?.stop()
    await pg?.destroy()
  })

  it('keeps the panel live and loses nothing', async () => {
    // 60 occupied/clear pairs on the fiddle roads, 20 before, 20 during and 20 after the outage.
    const pairs = (from: number) => Array.from({ length: 20 }, (_, i) => from + i)
    const base = Date.now() // device times within the window the server believes (docs/mqtt-topics.md)
    const run = async (numbers: number[]) => {
      for (const n of numbers) {
        const detector = `D1${3 + (n % 4)}`
        await device.publishAsync(`${PREFIX}detector/${detector}`, JSON.stringify({ occupied: true, at: base + n * 10 }))
        await device.publishAsync(`${PREFIX}detector/${detector}`, JSON.stringify({ occupied: false, at: base + n * 10 + 5 }))
        await sleep(20)
      }
    }
    await run(pairs(0))
    await pg.stop()
    const during = panel.change(c => c.type === 'block' && c.occupied, 3000)
    await run(pairs(20))
    await during // the live panel still moves with the database down
    await sleep(1500)
    await pg.start()
    await run(pairs(40))

    const sequelize = connectWithoutModels(pg.settings)
    let rows: { payload: { at: number, occupied: boolean } }[] = []
    for (let i = 0; i < 40 && rows.length < 120; i++) {
      await sleep(250)
      rows = await sequelize.query(`SELECT payload FROM events WHERE type = 'detector-input' ORDER BY id`, { type: QueryTypes.SELECT })
    }
    const keys = await sequelize.query<{ n: string, d: string }>(`SELECT count(*) AS n, count(DISTINCT entry_key) AS d FROM events`, { type: QueryTypes.SELECT })
    await sequelize.close()
    expect(rows).toHaveLength(120)
    const times = rows.map(r => r.payload.at)
    expect(times).toEqual([...times].sort((a, b) => a - b))
    expect(keys[0]!.n).toBe(keys[0]!.d)
    // The outage was real and the journal saw it: it kept the entries and wrote them when PostgreSQL came back.
    expect(server.output()).toMatch(/Journal: cannot write to the database/)
    expect(server.output()).toMatch(/Journal: database reachable again/)
  })
})
