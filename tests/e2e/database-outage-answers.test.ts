import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import WebSocket from 'ws'
import { seedDemoData } from '../../server/database/seed'
import { DEMO, SessionClient } from '../support/http-client'
import { LiveClient } from '../support/live-client'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../support/postgres'
import { freePort, startServer, type Running } from '../support/processes'

// With PostgreSQL stopped, everything that needs it answers at once and says why, and the server logs
// no unhandled rejection; the panel that is already open keeps its live view.
describe('answers while PostgreSQL is down', () => {
  let pg: ThrowawayPostgres
  let server: Running & { url: string }
  let signaller: SessionClient
  let panel: LiveClient

  beforeAll(async () => {
    pg = await startThrowawayPostgres({ database: 'blockbell_outage_answers' })
    const db = await pg.openMigrated()
    await seedDemoData(db)
    await db.sequelize.close()
    server = await startServer({
      BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
      BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password, MQTT_PORT: String(await freePort()),
    })
    signaller = new SessionClient(server.url)
    expect((await signaller.signIn(DEMO.signaller.email, DEMO.signaller.password)).status).toBe(200)
    panel = await LiveClient.open(signaller.cookieHeader, server.url)
    await panel.subscribe('wrenfold')
    await pg.stop()
  })
  afterAll(async () => {
    panel?.close()
    await server?.stop()
    await pg?.destroy()
  })

  it('an API route answers 503 with a message and Retry-After', async () => {
    const started = Date.now()
    const reply = await signaller.get('/api/layouts')
    expect(reply.status).toBe(503)
    expect(reply.body.message).toBe('The database is not reachable just now. Nothing was changed; try again in a moment.')
    expect(reply.headers.get('retry-after')).toBe('5')
    expect(Date.now() - started).toBeLessThan(10_000)
    const signIn = await new SessionClient(server.url).signIn(DEMO.viewer.email, DEMO.viewer.password)
    expect(signIn.status).toBe(503)
  })

  it('a new WebSocket handshake is refused with 503 instead of hanging', async () => {
    const status = await new Promise<number>((resolve) => {
      const socket = new WebSocket(server.url.replace(/^http/, 'ws') + '/live', { headers: { cookie: signaller.cookieHeader, origin: server.url } })
      const finish = (status: number) => {
        clearTimeout(timer)
        resolve(status)
        socket.terminate()
      }
      const timer = setTimeout(() => finish(-1), 10_000)
      socket.on('unexpected-response', (_req, res) => finish(res.statusCode ?? 0))
      socket.on('open', () => finish(101))
      socket.on('error', () => finish(0))
    })
    expect(status).toBe(503)
  })

  it('a command on the open panel is refused with the reason; the panel stays live', async () => {
    const result = await panel.command({ action: 'take-area', area: 'main' })
    expect(result).toMatchObject({ ok: false, reason: expect.stringMatching(/database is not reachable/) })
    expect((await panel.snapshot()).type).toBe('snapshot')
    expect(panel.socket.readyState).toBe(WebSocket.OPEN)
  })

  it('logs no unhandled rejection', () => {
    expect(server.output()).not.toMatch(/unhandledRejection|Unhandled ?Rejection/i)
  })
})
