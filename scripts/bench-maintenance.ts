// Track-cleaning counters on a large journal: `npm run bench:maintenance`.
// Fills a throwaway PostgreSQL with 1,000,000 journal rows for one layout of 40 blocks (block moves, dropouts
// and other traffic, over 90 days), records cleanings of half the blocks half-way through, then times the
// per-block counters two ways: read from the running tallies (what GET /maintenance does) and counted from the
// journal itself (the reference, and what the route did before the tallies); then the cost the tally trigger
// adds to journal batches of 200 rows.
import { insertJournalRecords } from '../server/live/journal-insert'
import { blockUse, blockUseFromJournal } from '../server/utils/maintenance'
import { startThrowawayPostgres } from '../tests/support/postgres'

const ROWS = Number(process.env.BENCH_ROWS ?? 1_000_000)
const BLOCKS = 40
const RUNS = 9

const pg = await startThrowawayPostgres({ fast: true })
const db = await pg.openMigrated()
try {
  const layout = await db.models.Layout.create({ slug: 'bench-loft', name: 'Bench loft', definition: { blocks: [] } })
  const t0 = performance.now()
  // 60 % block moves (alternating occupied/clear per block), 2 % dropouts, the rest other entries
  await db.sequelize.query(`
    INSERT INTO events (layout_id, at, type, subject, payload)
    SELECT :layoutId, now() - interval '90 days' + (g * interval '90 days') / :rows,
      CASE WHEN g % 50 = 0 THEN 'dropout' WHEN g % 10 < 6 THEN 'block' ELSE 'indication' END,
      'B' || (g % ${BLOCKS}),
      CASE WHEN g % 10 < 6 THEN jsonb_build_object('type', 'block', 'occupied', (g / ${BLOCKS}) % 2 = 0) ELSE '{}'::jsonb END
    FROM generate_series(1, :rows) AS g
  `, { replacements: { layoutId: layout.id, rows: ROWS } })
  await db.sequelize.query(`
    INSERT INTO cleanings (layout_id, blocks, method, done_at, created_at)
    VALUES (:layoutId, ARRAY(SELECT 'B' || i FROM generate_series(0, ${BLOCKS / 2 - 1}) i)::varchar[], 'vacuum', now() - interval '45 days', now())
  `, { replacements: { layoutId: layout.id } })
  await db.sequelize.query('ANALYZE events')
  console.log(`journal: ${ROWS.toLocaleString('en')} rows for one layout of ${BLOCKS} blocks, filled in ${((performance.now() - t0) / 1000).toFixed(1)} s`)

  const timed = async (runs: number, fn: () => Promise<unknown>) => {
    const times: number[] = []
    for (let i = 0; i < runs; i++) {
      const s = performance.now()
      await fn()
      times.push(performance.now() - s)
    }
    times.sort((a, b) => a - b)
    const p = (q: number) => times[Math.min(times.length - 1, Math.floor(q * times.length))]!
    return { p50: p(0.5), p95: p(0.95), max: p(1) }
  }
  const ms = (v: number) => v < 10 ? v.toFixed(2) : v.toFixed(0)
  const tallied = await blockUse(db.sequelize, layout.id)
  const counted = await blockUseFromJournal(db.sequelize, layout.id)
  const same = JSON.stringify([...tallied].sort()) === JSON.stringify([...counted].sort())
  console.log(`tallies equal to a count of the journal for all ${tallied.size} blocks: ${same ? 'yes' : 'NO'}`)
  const fromTally = await timed(200, () => blockUse(db.sequelize, layout.id))
  console.log(`counters from the running tallies, 200 runs: p50 ${ms(fromTally.p50)} ms, p95 ${ms(fromTally.p95)} ms, max ${ms(fromTally.max)} ms`)
  const fromJournal = await timed(RUNS, () => blockUseFromJournal(db.sequelize, layout.id))
  console.log(`counters counted from the journal (before the tallies), ${RUNS} runs: p50 ${ms(fromJournal.p50)} ms, p95 ${ms(fromJournal.p95)} ms, max ${ms(fromJournal.max)} ms`)

  // journal batches as the live side writes them (200 rows, 60 % block moves), with the tally trigger and without
  let n = 0
  const batch = () => Array.from({ length: 200 }, (_, i) => ({
    seq: n, key: `bench-${n++}`, layoutId: layout.id, sessionId: null, at: Date.now() + i, userId: null, epoch: null,
    type: i % 10 < 6 ? 'block' : 'indication', subject: `B${i % BLOCKS}`,
    payloadJson: i % 10 < 6 ? JSON.stringify({ type: 'block', occupied: (n / BLOCKS) % 2 < 1 }) : '{}',
  }))
  const withTrigger = await timed(100, () => insertJournalRecords(db.sequelize, batch()))
  await db.sequelize.query('ALTER TABLE events DISABLE TRIGGER events_block_tallies_add')
  const withoutTrigger = await timed(100, () => insertJournalRecords(db.sequelize, batch()))
  await db.sequelize.query('ALTER TABLE events ENABLE TRIGGER events_block_tallies_add')
  console.log(`journal batch of 200 rows, 100 batches: with the tally trigger p50 ${ms(withTrigger.p50)} ms / p95 ${ms(withTrigger.p95)} ms; without p50 ${ms(withoutTrigger.p50)} ms / p95 ${ms(withoutTrigger.p95)} ms`)
  const cleaning = await timed(10, () => db.sequelize.query(`SELECT block_tally_recount(:layoutId, ARRAY['B1', 'B2']::text[])`, { replacements: { layoutId: layout.id } }))
  console.log(`recount of two blocks since their last cleaning (as recording a cleaning does, here with 45 days of moves since): p50 ${ms(cleaning.p50)} ms`)
} finally {
  await db.sequelize.close()
  await pg.destroy()
}
