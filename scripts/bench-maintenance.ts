// Track-cleaning counters on a large journal: `npm run bench:maintenance`.
// Fills a throwaway PostgreSQL with 1,000,000 journal rows for one layout of 40 blocks (block moves, dropouts
// and other traffic, over 90 days), records cleanings of half the blocks half-way through, then times the
// per-block counting query (server/utils/maintenance.ts) and prints its plan.
import { QueryTypes } from 'sequelize'
import { blockUse } from '../server/utils/maintenance'
import { startThrowawayPostgres } from '../tests/support/postgres'

const ROWS = Number(process.env.BENCH_ROWS ?? 1_000_000)
const BLOCKS = 40
const RUNS = 15

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

  const times: number[] = []
  let blocks = 0
  for (let i = 0; i < RUNS; i++) {
    const s = performance.now()
    blocks = (await blockUse(db.sequelize, layout.id)).size
    times.push(performance.now() - s)
  }
  times.sort((a, b) => a - b)
  const p = (q: number) => times[Math.min(times.length - 1, Math.floor(q * times.length))]!.toFixed(0)
  console.log(`counters for ${blocks} blocks since their last cleaning, ${RUNS} runs: p50 ${p(0.5)} ms, p95 ${p(0.95)} ms, max ${p(1)} ms`)
  const plan = await db.sequelize.query<{ 'QUERY PLAN': string }>(`EXPLAIN SELECT count(*) FROM events WHERE layout_id = ${layout.id} AND type = 'block' AND at > now() - interval '45 days'`, { type: QueryTypes.SELECT })
  console.log('scan of one block-move window:', plan.map(r => r['QUERY PLAN']).filter(l => /Scan/.test(l)).map(l => l.trim()).join(' | '))
} finally {
  await db.sequelize.close()
  await pg.destroy()
}
