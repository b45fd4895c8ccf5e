// Real processes for tests: Debian's mosquitto broker, and a second Blockbell server from the same build.
import { spawn, type ChildProcess } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { createServer } from 'node:net'
import { join } from 'node:path'
import { tmpdir } from 'node:os'

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = createServer()
    server.once('error', reject)
    server.listen(0, '127.0.0.1', () => {
      const address = server.address()
      server.close(() => resolve(typeof address === 'object' && address ? address.port : 0))
    })
  })
}

async function waitFor(check: () => Promise<boolean>, timeoutMs: number, what: string): Promise<void> {
  const until = Date.now() + timeoutMs
  while (Date.now() < until) {
    if (await check().catch(() => false)) return
    await new Promise(resolve => setTimeout(resolve, 100))
  }
  throw new Error(`${what} did not come up within ${timeoutMs} ms`)
}

const portOpen = (port: number) => new Promise<boolean>((resolve) => {
  import('node:net').then(({ connect }) => {
    const socket = connect(port, '127.0.0.1', () => { socket.end(); resolve(true) })
    socket.on('error', () => resolve(false))
  })
})

export interface Running { process: ChildProcess, stop: () => Promise<void>, output: () => string }

function track(child: ChildProcess): Running {
  let output = ''
  child.stdout?.on('data', (d) => { output += d })
  child.stderr?.on('data', (d) => { output += d })
  return {
    process: child,
    output: () => output,
    stop: () => new Promise<void>((resolve) => {
      if (child.exitCode !== null || child.signalCode) return resolve()
      child.once('exit', () => resolve())
      child.kill('SIGTERM')
      setTimeout(() => child.kill('SIGKILL'), 5000).unref()
    }),
  }
}

/** Debian's mosquitto on a port of its own, anonymous clients allowed, nothing persisted. */
export async function startMosquitto(port: number): Promise<Running> {
  const dir = mkdtempSync(join(tmpdir(), 'blockbell-mosquitto-'))
  const config = join(dir, 'mosquitto.conf')
  writeFileSync(config, `listener ${port} 127.0.0.1\nallow_anonymous true\npersistence false\n`)
  const running = track(spawn('mosquitto', ['-c', config], { stdio: ['ignore', 'pipe', 'pipe'] }))
  await waitFor(() => portOpen(port), 10_000, 'mosquitto')
  return running
}

/** Another Blockbell server from the built output (.output), with its own ports and environment. */
export async function startServer(env: Record<string, string>): Promise<Running & { url: string }> {
  const port = await freePort()
  const child = spawn(process.execPath, ['.output/server/index.mjs'], {
    env: { ...process.env, HOST: '127.0.0.1', PORT: String(port), BLOCKBELL_DATA_DIR: mkdtempSync(join(tmpdir(), 'blockbell-server-')), ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const running = track(child)
  const url = `http://127.0.0.1:${port}`
  await waitFor(async () => (await fetch(`${url}/api/health`)).ok, 30_000, 'the second Blockbell server')
  // /api/health answers before the live side has its embedded broker listening: wait for that too.
  const brokerPort = Number(env.MQTT_PORT)
  if (!env.MQTT_URL && brokerPort > 0) await waitFor(() => portOpen(brokerPort), 30_000, 'the second Blockbell server\'s MQTT broker')
  return { ...running, url }
}

/** Runs mosquitto_pub once (a client nobody here wrote). */
export function mosquittoPub(port: number, topic: string, message: string, extra: string[] = []): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn('mosquitto_pub', ['-h', '127.0.0.1', '-p', String(port), '-t', topic, '-m', message, ...extra], { stdio: 'inherit' })
    child.once('exit', code => code === 0 ? resolve() : reject(new Error(`mosquitto_pub exited with ${code}`)))
  })
}
