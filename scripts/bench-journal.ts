// Benchmark of the event journal (prints figures; asserts nothing about time).
//   ./node_modules/.bin/tsx scripts/bench-journal.ts           a throwaway PostgreSQL cluster, fsync on
//   ./node_modules/.bin/tsx scripts/bench-journal.ts --env     the database named by BLOCKBELL_DB_* instead
//                                                              (adds about 1.1 million events, removed at the end)
// 1. Three ways to write a batch of 500, compared.  2. 2,000 events/s for 30 s through the journal, with a
// count and order check.  3. A filtered page (layout + time range + type, LIMIT 100) of a 1,000,000-event log.
// 4. A session of 1,000,000 events reviewed through the built server: log pages, replay, graph, CSV export.
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { monitorEventLoopDelay } from 'node:perf_hooks'
import pg from 'pg'
import { QueryTypes, Sequelize } from 'sequelize'
import { databaseSettings, type DatabaseSettings } from '../server/database/config'
import { openDatabase } from '../server/database/connection'
import { createMigrator } from '../server/database/migrator'
import { createJournal, type JournalEntry } from '../server/live/journal'
import { journalEntryKey, newJournalBootId, prepareJournalEntry, type JournalRecord } from '../server/live/journal-entry'
import { insertJournalRecords } from '../server/live/journal-insert'
import { startThrowawayPostgres, type ThrowawayPostgres } from '../tests/support/postgres'
import { benchSessions } from './bench-sessions'

const RATE = 2000
const SECONDS = 30
const LOG_ROWS = 1_000_000
const LOOP_SAMPLE_MS = 10

const quantile = (values: number[], q: number) => {
  const sorted = [...values].sort((a, b) => a - b)
  return sorted[Math.min(sorted.length - 1, Math.floor(q * sorted.length))] ?? NaN
}
const ms = (n: number) => `${n.toFixed(1)} ms`
const sleep = (n: number) => new Promise(done => setTimeout(done, n))

// An invented layout's traffic: mostly detector changes, some signal changes and operator commands.
const BLOCKS = Array.from({ length: 60 }, (_, i) => `B${i + 1}`)
function traffic(layoutId: number, n: number): JournalEntry {
  const block = BLOCKS[n % BLOCKS.length]!
  if (n % 10 === 9) return { layoutId, sessionId: null, at: Date.now(), type: 'command', subject: `S${n % 24}`, payload: { n, command: 'override', mode: 'hold', revision: n }, userId: null }
  if (n % 10 >= 7) return { layoutId, sessionId: null, at: Date.now(), type: 'signal', subject: `S${n % 24}`, payload: { n, aspect: n % 3 ? 'proceed' : 'danger', junction: null }, userId: null }
  return { layoutId, sessionId: null, at: Date.now(), type: 'detector', subject: block, payload: { n, occupied: n % 2 === 0, detector: `D-${block}` }, userId: null }
}

async function compareInsertMethods(sequelize: Sequelize, models: ReturnType<typeof openDatabase>['models'], layoutId: number) {
  const bootId = newJournalBootId()
  let seq = 0
  const batch = (): JournalRecord[] => Array.from({ length: 500 }, () => {
    seq++
    return prepareJournalEntry(traffic(layoutId, seq), seq, journalEntryKey(bootId, seq)).stored
  })
  const methods: Record<string, (rows: JournalRecord[]) => Promise<unknown>> = {
    'unnest arrays, one statement (used)': rows => insertJournalRecords(sequelize, rows),
    'multi-row VALUES, 4,000 parameters': async (rows) => {
      const values = rows.map((_, i) => `(${Array.from({ length: 8 }, (_, c) => `$${i * 8 + c + 1}`).join(',')})`).join(',')
      const bind = rows.flatMap(r => [r.layoutId, r.sessionId, new Date(r.at).toISOString(), r.type, r.subject, r.payloadJson, r.userId, r.key])
      await sequelize.query(`INSERT INTO events (layout_id, session_id, at, type, subject, payload, user_id, entry_key) VALUES ${values} ON CONFLICT (entry_key) DO NOTHING`, { bind, type: QueryTypes.INSERT })
    },
    'Sequelize bulkCreate ignoreDuplicates': rows => models.JournalEvent.bulkCreate(rows.map(r => ({
      layoutId: r.layoutId, sessionId: r.sessionId, at: new Date(r.at), type: r.type, subject: r.subject, payload: JSON.parse(r.payloadJson), userId: r.userId, entryKey: r.key,
    })), { ignoreDuplicates: true }),
  }
  const timings: Record<string, number[]> = Object.fromEntries(Object.keys(methods).map(k => [k, []]))
  for (let round = 0; round < 45; round++) {
    for (const [name, write] of Object.entries(methods)) {
      const rows = batch()
      const started = performance.now()
      await write(rows)
      if (round >= 5) timings[name]!.push(performance.now() - started) // the first rounds warm up
    }
  }
  console.log('\n1. Writing one batch of 500 events (40 batches each, interleaved)')
  for (const [name, t] of Object.entries(timings)) {
    console.log(`   ${name.padEnd(38)} p50 ${ms(quantile(t, 0.5)).padStart(9)}  p99 ${ms(quantile(t, 0.99)).padStart(9)}  ~${Math.round(500 / (quantile(t, 0.5) / 1000)).toLocaleString('en')} rows/s`)
  }
}

async function sustainedRun(settings: DatabaseSettings, probe: Sequelize, layoutId: number) {
  const insertMs: number[] = []
  const sequelize = new Sequelize(settings.database, settings.username, settings.password, {
    host: settings.host, port: settings.port, dialect: 'postgres', dialectModule: pg, benchmark: true,
    logging: (sql: string, timing?: number) => { if (sql.includes('INSERT INTO events') && timing !== undefined) insertMs.push(timing) },
  })
  const spillDir = mkdtempSync(join(tmpdir(), 'blockbell-bench-spill-'))
  const journal = createJournal({ sequelize, spillDir, log: line => console.log(`   (${line})`) })
  const loop = monitorEventLoopDelay({ resolution: LOOP_SAMPLE_MS })
  loop.enable()

  const started = performance.now()
  let appended = 0
  await new Promise<void>((done) => {
    const tick = setInterval(() => {
      const elapsed = performance.now() - started
      const due = Math.min(RATE * SECONDS, Math.floor(elapsed * RATE / 1000))
      while (appended < due) journal.append(traffic(layoutId, appended++))
      if (appended >= RATE * SECONDS) { clearInterval(tick); done() }
    }, 5)
  })
  const appendSeconds = (performance.now() - started) / 1000
  await journal.flush()
  const storedSeconds = (performance.now() - started) / 1000
  loop.disable()
  const stats = journal.stats()
  await journal.close()
  await sequelize.close()
  rmSync(spillDir, { recursive: true, force: true })

  const [check] = await probe.query<{ stored: string, distinct_keys: string, out_of_order: string }>(`
    SELECT count(*) AS stored, count(DISTINCT entry_key) AS distinct_keys,
           count(*) FILTER (WHERE n <> prev + 1) AS out_of_order
    FROM (SELECT entry_key, (payload->>'n')::int AS n, lag((payload->>'n')::int) OVER (ORDER BY id) AS prev
          FROM events WHERE layout_id = :layoutId) t`, { replacements: { layoutId }, type: QueryTypes.SELECT })

  console.log(`\n2. Sustained run: ${RATE.toLocaleString('en')} events/s for ${SECONDS} s through the journal (flush every 100 ms or 500 rows)`)
  console.log(`   appended ${appended.toLocaleString('en')} in ${appendSeconds.toFixed(2)} s = ${Math.round(appended / appendSeconds).toLocaleString('en')} events/s; all stored after ${storedSeconds.toFixed(2)} s = ${Math.round(appended / storedSeconds).toLocaleString('en')} events/s`)
  console.log(`   stored ${Number(check!.stored).toLocaleString('en')} rows, ${Number(check!.distinct_keys).toLocaleString('en')} distinct keys, ${check!.out_of_order} out of order -> ${Number(check!.stored) === appended && Number(check!.out_of_order) === 0 ? 'nothing lost, nothing twice, in order' : 'MISMATCH'}`)
  console.log(`   ${insertMs.length} batches, ${(appended / insertMs.length).toFixed(0)} rows each on average; INSERT time p50 ${ms(quantile(insertMs, 0.5))}, p99 ${ms(quantile(insertMs, 0.99))}, max ${ms(Math.max(...insertMs))}`)
  // Node's histogram holds the time between samples, so the sampling interval is taken off.
  const held = (p: number) => ms(Math.max(0, loop.percentile(p) / 1e6 - LOOP_SAMPLE_MS))
  console.log(`   event loop held up meanwhile p50 ${held(50)}, p99 ${held(99)}; journal: ${stats.writeFailures} failed writes, ${stats.spilled} spilled, ${stats.queued} queued`)
}

async function pageQueries(probe: Sequelize, layoutId: number) {
  const start = Date.UTC(2026, 0, 1)
  const started = performance.now()
  // 1,000,000 events over 30 days: 70 % detector, 20 % signal, 5 % turnout, 4 % command, 1 % alarm.
  await probe.query(`
    INSERT INTO events (layout_id, session_id, at, type, subject, payload, user_id, entry_key)
    SELECT :layoutId, NULL, to_timestamp(:start / 1000.0) + g * interval '2592 milliseconds',
           CASE WHEN g % 100 < 70 THEN 'detector' WHEN g % 100 < 90 THEN 'signal' WHEN g % 100 < 95 THEN 'turnout'
                WHEN g % 100 < 99 THEN 'command' ELSE 'alarm' END,
           'B' || (g % 60 + 1), jsonb_build_object('n', g, 'occupied', g % 2 = 0), NULL, 'bench-log-' || g
    FROM generate_series(1, :rows) AS g`, { replacements: { layoutId, start, rows: LOG_ROWS } })
  await probe.query('ANALYZE events')
  const [counted] = await probe.query<{ total: string }>('SELECT count(*) AS total FROM events', { type: QueryTypes.SELECT })
  const total = counted!.total
  console.log(`\n3. Filtered page of the log: ${LOG_ROWS.toLocaleString('en')} events inserted with generate_series in ${((performance.now() - started) / 1000).toFixed(1)} s (events table: ${Number(total).toLocaleString('en')} rows)`)

  const PAGE = `SELECT id, at, type, subject, payload, user_id FROM events
    WHERE layout_id = :layoutId AND at >= :from AND at < :to AND type = :type
    ORDER BY at, id LIMIT 100`
  const cases = [
    { label: 'type \'detector\' (70 %), 1-day window', type: 'detector', days: 1 },
    { label: 'type \'alarm\' (1 %), 7-day window', type: 'alarm', days: 7 },
  ]
  for (const c of cases) {
    const times: number[] = []
    let rows = 0
    for (let i = 0; i < 30; i++) {
      const from = new Date(start + ((i * 7919) % 20) * 86_400_000 + (i % 24) * 3_600_000)
      const to = new Date(from.getTime() + c.days * 86_400_000)
      const t0 = performance.now()
      const page = await probe.query(PAGE, { replacements: { layoutId, from, to, type: c.type }, type: QueryTypes.SELECT })
      times.push(performance.now() - t0)
      rows = page.length
    }
    console.log(`   ${c.label}: first ${ms(times[0]!)}, then p50 ${ms(quantile(times.slice(1), 0.5))}, p95 ${ms(quantile(times.slice(1), 0.95))}, max ${ms(Math.max(...times.slice(1)))} (${rows} rows a page, 30 windows)`)
    const from = new Date(start + 10 * 86_400_000)
    const plan = await probe.query<{ 'QUERY PLAN': string }>(`EXPLAIN (ANALYZE, BUFFERS) ${PAGE}`,
      { replacements: { layoutId, from, to: new Date(from.getTime() + c.days * 86_400_000), type: c.type }, type: QueryTypes.SELECT })
    for (const line of plan) console.log(`     ${line['QUERY PLAN']}`)
  }
}

async function main() {
  // 4. A session's review on the built server (scripts/bench-sessions.ts): --sessions-only skips 1-3.
  if (process.argv.includes('--sessions-only')) return benchSessions()
  const useEnv = process.argv.includes('--env')
  let cluster: ThrowawayPostgres | undefined
  let settings: DatabaseSettings
  if (useEnv) {
    settings = databaseSettings()
    console.log(`Database: ${settings.database} on ${settings.host}:${settings.port} (from the environment)`)
  } else {
    cluster = await startThrowawayPostgres({ fast: false })
    settings = cluster.settings
    console.log(`Database: a throwaway PostgreSQL cluster on 127.0.0.1:${settings.port}, fsync and synchronous commit on`)
  }
  const db = openDatabase(settings)
  const layouts: number[] = []
  try {
    await createMigrator(db.sequelize).up()
    const [version] = await db.sequelize.query<{ server_version: string }>('SHOW server_version', { type: QueryTypes.SELECT })
    console.log(`PostgreSQL ${version?.server_version}, Node ${process.version}`)
    const layout = async (name: string) => {
      const row = await db.models.Layout.create({ slug: `bench-${name}-${Date.now().toString(36)}`, name: `Bench ${name}`, definition: {} })
      layouts.push(row.id)
      return row.id
    }
    await compareInsertMethods(db.sequelize, db.models, await layout('methods'))
    await sleep(500)
    await sustainedRun(settings, db.sequelize, await layout('sustained'))
    await pageQueries(db.sequelize, await layout('log'))
  } finally {
    if (useEnv && layouts.length) await db.sequelize.query('DELETE FROM layouts WHERE id IN (:layouts)', { replacements: { layouts } })
    await db.sequelize.close()
    await cluster?.destroy()
  }
  // --journal-only: parts 1-3 alone (no build needed)
  if (!useEnv && !process.argv.includes('--journal-only')) await benchSessions()
}

main().catch((error) => { console.error(error); process.exitCode = 1 })
