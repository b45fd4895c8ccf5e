// A throwaway PostgreSQL cluster for one test file (or one benchmark run), started with the same shell
// functions as scripts/start.sh and scripts/test.sh, on a free port of its own. Tests that need to stop
// and restart the database (outages, reconnects) use this instead of the shared test cluster.
import { execFile, spawnSync } from 'node:child_process'
import { chmodSync, mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { promisify } from 'node:util'
import pg from 'pg'
import { Sequelize } from 'sequelize'
import { openDatabase, type Database } from '../../server/database/connection'
import type { DatabaseSettings } from '../../server/database/config'
import { createMigrator } from '../../server/database/migrator'

const run = promisify(execFile)
const REPO = resolve(import.meta.dirname, '../..')

export interface ThrowawayPostgresOptions {
  /** Database created in the cluster (default `blockbell`). */
  database?: string
  /** Turn fsync and synchronous commit off: faster, not crash-safe. Default true; benchmarks pass false. */
  fast?: boolean
  /** Parent folder for the cluster's files (default $BLOCKBELL_TEST_DATA, else the system temp folder). */
  parentDir?: string
}

export interface ThrowawayPostgres {
  settings: DatabaseSettings
  /** Stops the server (fast shutdown: open connections are cut, as in a real outage). */
  stop(): Promise<void>
  /** Starts it again on the same port with the same data. */
  start(): Promise<void>
  /** Stops the server and deletes its files. */
  destroy(): Promise<void>
  /** Opens a connection pool and applies every migration. */
  openMigrated(): Promise<Database>
  running: boolean
}

/** A TCP port nobody listens on right now (the kernel picks it). */
export async function freePort(): Promise<number> {
  return new Promise((done, fail) => {
    const server = createServer()
    server.once('error', fail)
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as { port: number }
      server.close(() => done(port))
    })
  })
}

function shellQuote(value: string): string {
  return `'${value.replace(/'/g, `'\\''`)}'`
}

/** Runs bash with the project's PostgreSQL functions loaded and the given variables set. */
async function pgShell(vars: Record<string, string>, script: string): Promise<string> {
  const assignments = Object.entries(vars).map(([k, v]) => `${k}=${shellQuote(v)}`).join('; ')
  const full = `set -e; cd ${shellQuote(REPO)}; . scripts/lib/common.sh; . scripts/lib/postgres.sh; ${assignments}; ${script}`
  try {
    const { stdout } = await run('bash', ['-c', full], { maxBuffer: 1 << 20 })
    return stdout
  } catch (error) {
    const e = error as { stdout?: string, stderr?: string, message: string }
    throw new Error(`PostgreSQL helper failed: ${e.message}\n${e.stdout ?? ''}\n${e.stderr ?? ''}`, { cause: error })
  }
}

/**
 * A second connection pool without the models. openDatabase() binds the model classes to its pool, so
 * a second openDatabase() in the same process would take the models away from the first.
 */
export function connectWithoutModels(settings: DatabaseSettings): Sequelize {
  return new Sequelize(settings.database, settings.username, settings.password, {
    host: settings.host, port: settings.port, dialect: 'postgres', dialectModule: pg, logging: false,
  })
}

export async function startThrowawayPostgres(options: ThrowawayPostgresOptions = {}): Promise<ThrowawayPostgres> {
  const database = options.database ?? 'blockbell'
  const parent = options.parentDir ?? process.env.BLOCKBELL_TEST_DATA ?? tmpdir()
  const wanted = mkdtempSync(join(parent, 'blockbell-pg-'))
  chmodSync(wanted, 0o755) // the cluster runs as user postgres, which must reach the folder
  const port = await freePort()
  const extra = options.fast === false ? '' : '-c fsync=off -c synchronous_commit=off -c full_page_writes=off'

  // pg_setup creates the cluster the first time and only starts it afterwards; it prints the folders it used.
  const setup = async () => {
    const out = await pgShell({ PG_EXTRA_OPTS: extra }, `pg_setup ${shellQuote(wanted)} ${port} >&2
      pg_create_db ${shellQuote(database)} >&2
      echo "BASE=$PG_BASE"; echo "BIN=$PG_BIN"; echo "USER=$PG_USER"; echo "PASSWORD=$PG_PASSWORD"`)
    return Object.fromEntries(out.trim().split('\n').map(line => [line.slice(0, line.indexOf('=')), line.slice(line.indexOf('=') + 1)]))
  }
  const found = await setup()
  const base = found.BASE!
  const bin = found.BIN!

  const stopSync = () => {
    spawnSync('bash', ['-c', `cd ${shellQuote(REPO)}; . scripts/lib/common.sh; . scripts/lib/postgres.sh; PG_BASE=${shellQuote(base)}; PG_BIN=${shellQuote(bin)}; pg_stop >/dev/null`])
  }
  // A test run that ends early must not leave a server running.
  const onExit = () => stopSync()
  process.once('exit', onExit)

  const cluster: ThrowawayPostgres = {
    settings: { host: '127.0.0.1', port, database, username: found.USER!, password: found.PASSWORD! },
    running: true,
    async stop() {
      await pgShell({ PG_BASE: base, PG_BIN: bin }, 'pg_stop >/dev/null')
      cluster.running = false
    },
    async start() {
      await setup()
      cluster.running = true
    },
    async destroy() {
      process.removeListener('exit', onExit)
      stopSync()
      cluster.running = false
      rmSync(base, { recursive: true, force: true })
      rmSync(wanted, { recursive: true, force: true })
    },
    async openMigrated() {
      const db = openDatabase(cluster.settings)
      await createMigrator(db.sequelize).up()
      return db
    },
  }
  return cluster
}
