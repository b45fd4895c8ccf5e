import { mkdtempSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { openDatabase } from '../../server/database/connection'
import { databaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'
import { seedDemoData } from '../../server/database/seed'
import { runFakeLayout, type FakeLayoutRun } from '../support/fake-layout-process'
import { freePort, startServer, type Running } from '../support/processes'

// What `npm start` does on a first start: a new database with the demo, the built server with its embedded
// broker, and a second later the fake layout with its trains and a turnout memory that does not exist yet.
// The automatic signals out of the fiddle yard clear as soon as the layout has reported its turnouts, and
// the trains standing at them must then leave: 1F42 runs from fiddle road 1 (FY1) past SF1 into UM1.
const DB = 'blockbell_fake_start' // made empty by scripts/test.sh
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

describe('the demo on a first start', () => {
  let server: (Running & { url: string }) | undefined
  let layout: FakeLayoutRun | undefined
  beforeAll(async () => {
    const db = openDatabase({ ...databaseSettings(), database: DB })
    await createMigrator(db.sequelize).up()
    await seedDemoData(db)
    await db.sequelize.close()
  })
  afterAll(async () => {
    await layout?.stop()
    await server?.stop()
  })

  it('runs the first train out of the fiddle yard once its signal clears', async () => {
    const mqttPort = await freePort()
    server = await startServer({ BLOCKBELL_DB_NAME: DB, MQTT_PORT: String(mqttPort), BLOCKBELL_DEMO: '1' })
    await sleep(1000)
    const memory = join(mkdtempSync(join(tmpdir(), 'blockbell-fake-start-')), 'turnouts.json')
    layout = runFakeLayout({ mqttUrl: `mqtt://127.0.0.1:${mqttPort}` }, [
      // the seed of the run this was first seen in; no signals passed at danger, so only a clear SF1 lets 1F42 go
      '--seed', '936792410', '--spad-chance', '0', '--dropout-chance', '0', '--speed-factor', '8', '--turnout-memory', memory,
    ])
    await layout.line(/1F42 \(up express\) stands in FY1/)
    await expect(layout.line(/1F42 enters UM1/, 30_000)).resolves.toMatch(/1F42 enters UM1/)
  })
})
