import { parseArgs } from 'node:util'

/** Command line and environment of the fake layout. A command-line option wins over its variable. */

export const USAGE = `Blockbell fake layout: simulated trains, detectors and turnouts over MQTT.

  ./node_modules/.bin/tsx fake-hardware/index.ts [options]

Options (environment variable in brackets):
  --layout <file>          layout definition (BLOCKBELL_FAKE_LAYOUT; default shared/layouts/demo-layout.json)
  --slug <slug>            layout slug in the topics blockbell/v1/<slug>/... (BLOCKBELL_FAKE_SLUG; default wrenfold)
  --seed <n>               seed of the random choices; same seed, same run (BLOCKBELL_FAKE_SEED; default: from the clock, printed)
  --trains <file>          train plans (BLOCKBELL_FAKE_TRAINS; default fake-hardware/trains/<slug>.json if present,
                           else trains picked on the layout's round trips)
  --train-count <n>        number of trains picked when there is no plan file (default 4)
  --script <file>          scripted mode: publish the timed events of this JSON file, then exit (BLOCKBELL_FAKE_SCRIPT)
  --spad-chance <p>        chance that a train runs past a signal at danger, per stop (BLOCKBELL_FAKE_SPAD_CHANCE; default 0.02)
  --dropout-chance <p>     chance of a brief detector dropout (dirty track) per block entered (BLOCKBELL_FAKE_DROPOUT_CHANCE; default 0.05)
  --speed-factor <x>       run trains (and scripts) x times faster (BLOCKBELL_FAKE_SPEED_FACTOR; default 1)
  --ignore-signals         run on block occupancy alone, without Blockbell publishing signal indications
  --turnout-memory <file>  keep the turnouts' positions in this file and start from them next time, as real
                           turnouts stay where they were left (BLOCKBELL_FAKE_TURNOUT_MEMORY; default: start normal)
  --stop-after <ms>        stop after this many ms (default: run until Ctrl-C)
  --help                   this text

Broker: MQTT_URL (default mqtt://127.0.0.1:$MQTT_PORT, MQTT_PORT default 18830), user BLOCKBELL_FAKE_MQTT_USERNAME
(default fake-layout), password BLOCKBELL_FAKE_MQTT_PASSWORD (default fake-layout-demo).`

export interface FakeOptions {
  layout: string
  slug: string
  seed: number | null
  trains: string | null
  trainCount: number
  script: string | null
  spadChance: number
  dropoutChance: number
  speedFactor: number
  ignoreSignals: boolean
  turnoutMemory: string | null
  stopAfterMs: number | null
  mqttUrl: string
  username: string
  password: string
}

export type OptionsResult = { ok: true, options: FakeOptions } | { ok: false, help: boolean, errors: string[] }

const SLUG = /^[a-z0-9][a-z0-9-]{0,63}$/

export function parseOptions(argv: readonly string[], env: Readonly<Record<string, string | undefined>>): OptionsResult {
  let values: Record<string, string | boolean | undefined>
  try {
    values = parseArgs({
      args: [...argv],
      options: {
        'layout': { type: 'string' },
        'slug': { type: 'string' },
        'seed': { type: 'string' },
        'trains': { type: 'string' },
        'train-count': { type: 'string' },
        'script': { type: 'string' },
        'spad-chance': { type: 'string' },
        'dropout-chance': { type: 'string' },
        'speed-factor': { type: 'string' },
        'ignore-signals': { type: 'boolean' },
        'turnout-memory': { type: 'string' },
        'stop-after': { type: 'string' },
        'help': { type: 'boolean' },
      },
      strict: true,
      allowPositionals: false,
    }).values
  } catch (e) {
    return { ok: false, help: false, errors: [(e as Error).message] }
  }
  if (values.help) return { ok: false, help: true, errors: [] }
  const errors: string[] = []
  const str = (name: string, envName?: string): string | undefined => {
    const v = values[name]
    if (typeof v === 'string') return v
    return envName ? env[envName] || undefined : undefined
  }
  const num = (name: string, envName: string | undefined, fallback: number, ok: (n: number) => boolean, what: string): number => {
    const s = str(name, envName)
    if (s === undefined) return fallback
    const n = Number(s)
    if (s.trim() === '' || !Number.isFinite(n) || !ok(n)) {
      errors.push(`--${name}${envName ? ` (${envName})` : ''}: "${s}" is not ${what}`)
      return fallback
    }
    return n
  }
  const slug = str('slug', 'BLOCKBELL_FAKE_SLUG') ?? 'wrenfold'
  if (!SLUG.test(slug)) errors.push(`--slug: "${slug}" is not a layout slug (lower-case letters, digits and "-")`)
  const seedText = str('seed', 'BLOCKBELL_FAKE_SEED')
  const seed = seedText === undefined ? null : num('seed', 'BLOCKBELL_FAKE_SEED', 0, n => Number.isInteger(n) && n >= 0 && n < 2 ** 32, 'a whole number from 0 to 4294967295')
  const port = env.MQTT_PORT || '18830'
  const options: FakeOptions = {
    layout: str('layout', 'BLOCKBELL_FAKE_LAYOUT') ?? 'shared/layouts/demo-layout.json',
    slug,
    seed,
    trains: str('trains', 'BLOCKBELL_FAKE_TRAINS') ?? null,
    trainCount: num('train-count', undefined, 4, n => Number.isInteger(n) && n >= 1 && n <= 12, 'a whole number from 1 to 12'),
    script: str('script', 'BLOCKBELL_FAKE_SCRIPT') ?? null,
    spadChance: num('spad-chance', 'BLOCKBELL_FAKE_SPAD_CHANCE', 0.02, n => n >= 0 && n <= 1, 'a chance from 0 to 1'),
    dropoutChance: num('dropout-chance', 'BLOCKBELL_FAKE_DROPOUT_CHANCE', 0.05, n => n >= 0 && n <= 1, 'a chance from 0 to 1'),
    speedFactor: num('speed-factor', 'BLOCKBELL_FAKE_SPEED_FACTOR', 1, n => n > 0 && n <= 100, 'a number above 0, at most 100'),
    ignoreSignals: values['ignore-signals'] === true,
    turnoutMemory: str('turnout-memory', 'BLOCKBELL_FAKE_TURNOUT_MEMORY') ?? null,
    stopAfterMs: str('stop-after') === undefined ? null : num('stop-after', undefined, 0, n => n > 0, 'a positive number of ms'),
    mqttUrl: env.MQTT_URL || `mqtt://127.0.0.1:${port}`,
    username: env.BLOCKBELL_FAKE_MQTT_USERNAME || 'fake-layout',
    password: env.BLOCKBELL_FAKE_MQTT_PASSWORD || 'fake-layout-demo',
  }
  return errors.length ? { ok: false, help: false, errors } : { ok: true, options }
}
