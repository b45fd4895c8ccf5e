import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import mqtt from 'mqtt'
import { openDatabase } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'
import { seedDemoData } from '../../server/database/seed'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { freePort, startServer, type Running } from '../support/processes'

// The live state survives a server restart: it is rebuilt from the journal (and retained MQTT messages).
const DB = 'blockbell_restart'
const PREFIX = 'blockbell/v1/wrenfold/'

async function panelOn(server: { url: string }, role: keyof typeof DEMO) {
  const http = new SessionClient(server.url)
  await http.signIn(DEMO[role].email, DEMO[role].password)
  const panel = await LiveClient.open(http.cookieHeader, server.url)
  await panel.subscribe('wrenfold')
  return panel
}

describe('server restart', () => {
  let server: Running & { url: string }
  let mqttPort: number
  beforeAll(async () => {
    const db = openDatabase({ ...databaseSettings(), database: DB })
    await createMigrator(db.sequelize).up()
    await seedDemoData(db)
    await db.sequelize.close()
    mqttPort = await freePort()
  })
  afterAll(async () => { await server?.stop() })

  it('keeps overrides, occupancy, descriptions, alarms and area holders', async () => {
    const env = { BLOCKBELL_DB_NAME: DB, MQTT_PORT: String(mqttPort) }
    server = await startServer(env)
    const device = await mqtt.connectAsync(`mqtt://127.0.0.1:${mqttPort}`, { username: 'fake-layout', password: 'fake-layout-demo' })
    const panel = await panelOn(server, 'signaller')
    expect(await panel.command({ action: 'take-area', area: 'main' })).toMatchObject({ ok: true })
    const { state } = await panel.snapshot()
    expect(await panel.command({ action: 'set-override', signal: 'SU3', mode: 'hold', revision: state.signalRevisions.SU3 })).toMatchObject({ ok: true })
    await device.publishAsync(`${PREFIX}detector/D03`, '1')
    await panel.change(c => c.type === 'block' && c.block === 'UM3')
    expect(await panel.command({ action: 'take-area', area: 'branch' })).toMatchObject({ ok: true })
    expect(await panel.command({ action: 'interpose', block: 'UM3', description: '1F42' })).toMatchObject({ ok: true })
    const alarm = panel.change(c => c.type === 'alarm')
    await device.publishAsync(`${PREFIX}detector/D04`, '1')
    await alarm
    const before = await panel.snapshot()
    panel.close()
    await device.endAsync()
    await new Promise(resolve => setTimeout(resolve, 500)) // the journal writes every 100 ms
    await server.stop()

    server = await startServer(env)
    const after = await panelOn(server, 'viewer')
    const restored = await after.snapshot()
    expect(restored.state.overrides.SU3).toBe('hold')
    expect(restored.state.signalRevisions.SU3).toBe(before.state.signalRevisions.SU3)
    expect(restored.state.occupied).toEqual(before.state.occupied)
    expect(restored.state.descriptions).toEqual(before.state.descriptions)
    expect(restored.state.descriptions.UM4 ?? restored.state.descriptions.UM3).toBe('1F42')
    expect(restored.state.alarms.map(a => [a.signal, a.block, a.acknowledgedAt])).toEqual([['SU3', 'UM4', null]])
    expect(restored.state.indications).toEqual(before.state.indications)
    expect(restored.areas.main?.name).toBe('Tam Oakridge')
    after.close()
  })
})
