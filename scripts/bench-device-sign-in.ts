// npm run bench:device-sign-in — how long an admin's web sign-in takes while 100 wrong device passwords
// arrive on the broker in parallel, and how long the broker takes to refuse a wrong password for a known
// device name and for an unknown one (they should not differ: no way to tell which names exist).
// Starts its own PostgreSQL and a Blockbell server from the build in the current folder (.output), so
// running it from another checkout measures that checkout's build.
import mqtt from 'mqtt'
import { startThrowawayPostgres } from '../tests/support/postgres'
import { seedDemoData } from '../server/database/seed'
import { freePort, startServer } from '../tests/support/processes'
import { DEMO, SessionClient } from '../tests/support/http-client'

const FLOOD = Number(process.env.BENCH_FLOOD ?? 100)
const PROBES = Number(process.env.BENCH_PROBES ?? 10)

const median = (values: number[]) => [...values].sort((a, b) => a - b)[Math.floor(values.length / 2)]!
const ms = (n: number) => `${n.toFixed(0).padStart(6)} ms`

const pg = await startThrowawayPostgres({ database: 'blockbell_bench_sign_in' })
const db = await pg.openMigrated()
await seedDemoData(db)
await db.sequelize.close()
const mqttPort = await freePort()
const server = await startServer({
  BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
  BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password,
  MQTT_PORT: String(mqttPort), NUXT_SESSION_PASSWORD: 'bench-session-password-at-least-32-chars',
})
const url = `mqtt://127.0.0.1:${mqttPort}`

/** Milliseconds until the broker answers a CONNECT with these credentials. */
async function refusalTime(username: string, password: string): Promise<number> {
  const start = performance.now()
  await mqtt.connectAsync(url, { username, password, reconnectPeriod: 0, connectTimeout: 30_000 }).then(c => c.endAsync(), () => {})
  return performance.now() - start
}

async function webSignInTime(): Promise<number> {
  const start = performance.now()
  const reply = await new SessionClient(server.url).signIn(DEMO.admin.email, DEMO.admin.password)
  if (reply.status !== 200) throw new Error(`admin sign-in answered ${reply.status}`)
  return performance.now() - start
}

try {
  const quiet: number[] = []
  for (let i = 0; i < 5; i++) quiet.push(await webSignInTime())

  // Known names: devices added for this run, each tried once (so no throttle kicks in).
  const admin = new SessionClient(server.url)
  await admin.signIn(DEMO.admin.email, DEMO.admin.password)
  const known: string[] = []
  for (let i = 0; i < PROBES; i++) {
    const username = `bench-board-${i}`
    const reply = await admin.request('POST', '/api/devices', { username, name: `Bench board ${i}`, password: 'bench-password-1' }, { origin: server.url })
    if (reply.status !== 201) throw new Error(`adding a device answered ${reply.status}`)
    known.push(username)
  }
  const knownTimes: number[] = []
  const unknownTimes: number[] = []
  for (let i = 0; i < PROBES; i++) {
    knownTimes.push(await refusalTime(known[i]!, 'wrong-password-1'))
    unknownTimes.push(await refusalTime(`no-such-board-${i}`, 'wrong-password-1'))
  }

  const flood = Array.from({ length: FLOOD }, () => refusalTime('fake-layout', 'wrong-password-1'))
  await new Promise(resolve => setTimeout(resolve, 50))
  const during = await webSignInTime()
  const floodTimes = await Promise.all(flood)

  console.log(`web sign-in (admin), quiet, median of 5:            ${ms(median(quiet))}`)
  console.log(`web sign-in (admin) during ${FLOOD} parallel wrong MQTT passwords: ${ms(during)}`)
  console.log(`  the ${FLOOD} MQTT refusals: median ${ms(median(floodTimes))}, slowest ${ms(Math.max(...floodTimes))}`)
  console.log(`MQTT refusal, known device name, median of ${PROBES}:   ${ms(median(knownTimes))}`)
  console.log(`MQTT refusal, unknown name, median of ${PROBES}:        ${ms(median(unknownTimes))}`)
} finally {
  await server.stop()
  await pg.destroy()
}
