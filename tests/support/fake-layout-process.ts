// The fake layout (fake-hardware/index.ts) as a real process, signed in to the server's broker as the device
// `fake-layout`: in scripted mode, or running its simulated trains. A test waits for the lines it prints as
// it publishes each event or moves a train, so it knows when a detector changed without guessing at timings.
import { spawn, type ChildProcess } from 'node:child_process'
import { resolve } from 'node:path'

const REPO = resolve(import.meta.dirname, '../..')

export interface FakeLayoutRun {
  process: ChildProcess
  /** Everything the process printed so far. */
  output(): string
  /** Resolves when a line matching `pattern` has been printed (already or later). */
  line(pattern: RegExp, timeoutMs?: number): Promise<string>
  /** Resolves with the exit code once the script is done. */
  exited: Promise<number | null>
  stop(): Promise<void>
}

export interface FakeLayoutOptions {
  mqttUrl: string
  /** The script file (JSON, relative to the repository or absolute). */
  script: string
  slug?: string
  /** The layout file the fake layout checks the script against (default: the demo layout). */
  layout?: string
  username?: string
  password?: string
}

export function runFakeLayoutScript(o: FakeLayoutOptions): FakeLayoutRun {
  return runFakeLayout(o, ['--script', o.script, '--slug', o.slug ?? 'wrenfold', ...(o.layout ? ['--layout', o.layout] : [])])
}

/** The fake layout with these command-line options (`--help` lists them), e.g. its simulated trains. */
export function runFakeLayout(o: Omit<FakeLayoutOptions, 'script'>, options: string[]): FakeLayoutRun {
  const child = spawn(resolve(REPO, 'node_modules/.bin/tsx'), ['fake-hardware/index.ts', ...options], {
    cwd: REPO,
    env: {
      ...process.env,
      MQTT_URL: o.mqttUrl,
      BLOCKBELL_FAKE_MQTT_USERNAME: o.username ?? 'fake-layout',
      BLOCKBELL_FAKE_MQTT_PASSWORD: o.password ?? process.env.BLOCKBELL_FAKE_MQTT_PASSWORD ?? 'fake-layout-demo',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  let text = ''
  let waiters: { pattern: RegExp, done: (line: string) => void }[] = []
  const onData = (d: Buffer) => {
    text += d
    const lines = text.split('\n')
    waiters = waiters.filter((w) => {
      const hit = lines.find(l => w.pattern.test(l))
      if (hit === undefined) return true
      w.done(hit)
      return false
    })
  }
  child.stdout!.on('data', onData)
  child.stderr!.on('data', onData)
  const exited = new Promise<number | null>(done => child.once('exit', code => done(code)))

  return {
    process: child,
    output: () => text,
    line(pattern, timeoutMs = 15_000) {
      const hit = text.split('\n').find(l => pattern.test(l))
      if (hit !== undefined) return Promise.resolve(hit)
      return new Promise((done, fail) => {
        const timer = setTimeout(() => fail(new Error(`the fake layout printed no line matching ${pattern} within ${timeoutMs} ms:\n${text}`)), timeoutMs)
        waiters.push({ pattern, done: (line) => { clearTimeout(timer); done(line) } })
        void exited.then(() => setTimeout(() => {
          if (waiters.some(w => w.pattern === pattern)) {
            clearTimeout(timer)
            fail(new Error(`the fake layout exited without printing a line matching ${pattern}:\n${text}`))
          }
        }, 50))
      })
    },
    exited,
    stop: () => new Promise<void>((done) => {
      if (child.exitCode !== null || child.signalCode) return done()
      child.once('exit', () => done())
      child.kill('SIGTERM')
      setTimeout(() => child.kill('SIGKILL'), 5000).unref()
    }),
  }
}
