import type { QueryInterface } from 'sequelize'

/**
 * A running tally per block of its use since its latest cleaning, kept by PostgreSQL itself as journal rows are
 * written, so the Maintenance screen reads one row per block instead of counting the journal.
 *
 * The tally holds only aggregates that can be added to (counts, sums of times, first and last times), so a batch
 * of new journal rows is folded in by one statement-level trigger. A cleaning written, changed or removed, or
 * deleted journal rows, recount the blocks concerned from the journal (`block_tally_recount`). Both take a transaction lock per layout, so a
 * recount and a batch never interleave. The times are summed as `numeric` epochs: exact, unlike floats.
 */
const LOCK_CLASS = 4712 // the first key of pg_advisory_xact_lock(int, int): Blockbell's block tallies

// compared as JSON values, so an odd payload is simply not counted and can never make a journal write fail
const OCCUPIED = `e.payload->'occupied' = 'true'::jsonb`
const CLEAR = `e.payload->'occupied' = 'false'::jsonb`

/** The aggregates of a set of journal rows `e` of one block, as the tally stores them. */
const AGGREGATES = `
  count(*) FILTER (WHERE e.type = 'block' AND ${OCCUPIED}) AS passages,
  coalesce(sum(extract(epoch FROM e.at)) FILTER (WHERE e.type = 'block' AND ${CLEAR}), 0) AS clear_epochs,
  coalesce(sum(extract(epoch FROM e.at)) FILTER (WHERE e.type = 'block' AND ${OCCUPIED}), 0) AS occupied_epochs,
  min(e.at) FILTER (WHERE e.type = 'block' AND ${OCCUPIED}) AS first_occupied,
  min(e.at) FILTER (WHERE e.type = 'block' AND ${CLEAR}) AS first_clear,
  max(e.at) FILTER (WHERE e.type = 'block' AND ${OCCUPIED}) AS last_occupied,
  max(e.at) FILTER (WHERE e.type = 'block' AND ${CLEAR}) AS last_clear,
  count(*) FILTER (WHERE e.type = 'dropout') AS dropouts`

export async function up({ context: qi }: { context: QueryInterface }) {
  const q = (sql: string) => qi.sequelize.query(sql)
  await q(`
    CREATE TABLE block_tallies (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      block varchar(64) NOT NULL,
      since timestamptz,
      passages bigint NOT NULL DEFAULT 0,
      clear_epochs numeric NOT NULL DEFAULT 0,
      occupied_epochs numeric NOT NULL DEFAULT 0,
      first_occupied timestamptz,
      first_clear timestamptz,
      last_occupied timestamptz,
      last_clear timestamptz,
      dropouts bigint NOT NULL DEFAULT 0,
      PRIMARY KEY (layout_id, block)
    )`)
  await q(`
    CREATE FUNCTION block_tally_recount(p_layout integer, p_blocks text[]) RETURNS void LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM pg_advisory_xact_lock(${LOCK_CLASS}, p_layout);
      IF NOT EXISTS (SELECT 1 FROM layouts WHERE id = p_layout) THEN RETURN; END IF;
      INSERT INTO block_tallies AS t (layout_id, block, since, passages, clear_epochs, occupied_epochs,
        first_occupied, first_clear, last_occupied, last_clear, dropouts)
      SELECT p_layout, b.block, c.since, a.passages, a.clear_epochs, a.occupied_epochs,
        a.first_occupied, a.first_clear, a.last_occupied, a.last_clear, a.dropouts
      FROM (SELECT DISTINCT unnest(p_blocks) AS block) b
      CROSS JOIN LATERAL (SELECT max(cl.done_at) AS since FROM cleanings cl WHERE cl.layout_id = p_layout AND b.block = ANY(cl.blocks)) c
      CROSS JOIN LATERAL (
        SELECT ${AGGREGATES}
        FROM events e
        WHERE e.layout_id = p_layout AND e.type IN ('block', 'dropout') AND e.subject = b.block
          AND e.at > coalesce(c.since, '-infinity'::timestamptz)
      ) a
      ON CONFLICT (layout_id, block) DO UPDATE SET since = excluded.since, passages = excluded.passages,
        clear_epochs = excluded.clear_epochs, occupied_epochs = excluded.occupied_epochs,
        first_occupied = excluded.first_occupied, first_clear = excluded.first_clear,
        last_occupied = excluded.last_occupied, last_clear = excluded.last_clear, dropouts = excluded.dropouts;
    END $$`)
  await q(`
    CREATE FUNCTION block_tallies_add() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM pg_advisory_xact_lock(${LOCK_CLASS}, l.layout_id)
      FROM (SELECT DISTINCT layout_id FROM new_rows WHERE type IN ('block', 'dropout') ORDER BY layout_id) l;
      -- a block seen for the first time counts from its latest cleaning (rows before it do not count)
      INSERT INTO block_tallies (layout_id, block, since)
      SELECT DISTINCT n.layout_id, n.subject,
        (SELECT max(cl.done_at) FROM cleanings cl WHERE cl.layout_id = n.layout_id AND n.subject = ANY(cl.blocks))
      FROM new_rows n WHERE n.type IN ('block', 'dropout') AND n.subject IS NOT NULL
      ON CONFLICT DO NOTHING;
      UPDATE block_tallies t SET
        passages = t.passages + a.passages,
        clear_epochs = t.clear_epochs + a.clear_epochs,
        occupied_epochs = t.occupied_epochs + a.occupied_epochs,
        first_occupied = least(t.first_occupied, a.first_occupied),
        first_clear = least(t.first_clear, a.first_clear),
        last_occupied = greatest(t.last_occupied, a.last_occupied),
        last_clear = greatest(t.last_clear, a.last_clear),
        dropouts = t.dropouts + a.dropouts
      FROM (
        SELECT e.layout_id, e.subject, ${AGGREGATES}
        FROM new_rows e JOIN block_tallies s ON s.layout_id = e.layout_id AND s.block = e.subject
        WHERE e.type IN ('block', 'dropout') AND e.at > coalesce(s.since, '-infinity'::timestamptz)
        GROUP BY e.layout_id, e.subject
      ) a
      WHERE t.layout_id = a.layout_id AND t.block = a.subject;
      RETURN NULL;
    END $$`)
  await q(`
    CREATE FUNCTION block_tallies_remove() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM block_tally_recount(g.layout_id, g.blocks)
      FROM (SELECT layout_id, array_agg(DISTINCT subject) AS blocks FROM old_rows
            WHERE type IN ('block', 'dropout') AND subject IS NOT NULL GROUP BY layout_id ORDER BY layout_id) g;
      RETURN NULL;
    END $$`)
  await q(`
    CREATE FUNCTION block_tallies_cleaned() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF TG_OP <> 'INSERT' THEN PERFORM block_tally_recount(OLD.layout_id, OLD.blocks::text[]); END IF;
      IF TG_OP <> 'DELETE' THEN PERFORM block_tally_recount(NEW.layout_id, NEW.blocks::text[]); END IF;
      RETURN NULL;
    END $$`)
  // however a cleaning is written or removed, its blocks count again from their latest cleaning
  await q(`CREATE TRIGGER cleanings_block_tallies AFTER INSERT OR UPDATE OR DELETE ON cleanings
    FOR EACH ROW EXECUTE FUNCTION block_tallies_cleaned()`)
  await q(`CREATE TRIGGER events_block_tallies_add AFTER INSERT ON events REFERENCING NEW TABLE AS new_rows
    FOR EACH STATEMENT EXECUTE FUNCTION block_tallies_add()`)
  await q(`CREATE TRIGGER events_block_tallies_remove AFTER DELETE ON events REFERENCING OLD TABLE AS old_rows
    FOR EACH STATEMENT EXECUTE FUNCTION block_tallies_remove()`)
  // the journal so far, counted once
  await q(`
    SELECT block_tally_recount(g.layout_id, g.blocks) FROM (
      SELECT layout_id, array_agg(block) AS blocks FROM (
        SELECT DISTINCT layout_id, subject AS block FROM events WHERE type IN ('block', 'dropout') AND subject IS NOT NULL
        UNION SELECT layout_id, unnest(blocks) FROM cleanings
      ) x GROUP BY layout_id
    ) g`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  const q = (sql: string) => qi.sequelize.query(sql)
  await q('DROP TRIGGER cleanings_block_tallies ON cleanings')
  await q('DROP FUNCTION block_tallies_cleaned()')
  await q('DROP TRIGGER events_block_tallies_remove ON events')
  await q('DROP TRIGGER events_block_tallies_add ON events')
  await q('DROP FUNCTION block_tallies_remove()')
  await q('DROP FUNCTION block_tallies_add()')
  await q('DROP FUNCTION block_tally_recount(integer, text[])')
  await q('DROP TABLE block_tallies')
}
