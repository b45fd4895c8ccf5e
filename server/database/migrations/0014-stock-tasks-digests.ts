import type { QueryInterface } from 'sequelize'

/**
 * The stock roster: locomotives and other stock of a layout, the train descriptions each ran under (and when),
 * and their services. Running time and distance are not stored: they come from the journal's description entries.
 * Other maintenance tasks (a due date or a repeat interval, an assignee) and what was done about them.
 * The weeks whose reminder digest went out: the unique week key lets one server of several send it.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  const q = (sql: string) => qi.sequelize.query(sql)
  await q(`
    CREATE TABLE stock_items (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      name varchar(80) NOT NULL,
      number varchar(32),
      notes text,
      photo uuid REFERENCES uploads(id) ON DELETE SET NULL,
      service_hours numeric CHECK (service_hours > 0),
      service_km numeric CHECK (service_km > 0),
      created_at timestamptz NOT NULL DEFAULT now()
    )`)
  await q('CREATE INDEX stock_items_layout ON stock_items (layout_id)')
  await q(`
    CREATE TABLE stock_runs (
      id serial PRIMARY KEY,
      stock_id integer NOT NULL REFERENCES stock_items(id) ON DELETE CASCADE,
      description varchar(16) NOT NULL,
      from_at timestamptz NOT NULL,
      to_at timestamptz,
      CHECK (to_at IS NULL OR to_at >= from_at)
    )`)
  // one description at a time per item
  await q('CREATE UNIQUE INDEX stock_runs_one_open ON stock_runs (stock_id) WHERE to_at IS NULL')
  await q(`
    CREATE TABLE stock_services (
      id serial PRIMARY KEY,
      stock_id integer NOT NULL REFERENCES stock_items(id) ON DELETE CASCADE,
      done_at timestamptz NOT NULL,
      done_by integer REFERENCES users(id) ON DELETE SET NULL,
      note text
    )`)
  await q('CREATE INDEX stock_services_item ON stock_services (stock_id, done_at)')
  await q(`
    CREATE TABLE maintenance_tasks (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      title varchar(120) NOT NULL,
      notes text,
      assignee_id integer REFERENCES users(id) ON DELETE SET NULL,
      due_on date,
      repeat_days integer CHECK (repeat_days > 0),
      created_at timestamptz NOT NULL DEFAULT now(),
      CHECK (due_on IS NOT NULL OR repeat_days IS NOT NULL)
    )`)
  await q('CREATE INDEX maintenance_tasks_layout ON maintenance_tasks (layout_id)')
  await q(`
    CREATE TABLE maintenance_task_log (
      id serial PRIMARY KEY,
      task_id integer NOT NULL REFERENCES maintenance_tasks(id) ON DELETE CASCADE,
      done_at timestamptz NOT NULL,
      done_by integer REFERENCES users(id) ON DELETE SET NULL,
      note text
    )`)
  await q('CREATE INDEX maintenance_task_log_task ON maintenance_task_log (task_id, done_at)')
  await q(`
    CREATE TABLE sent_digests (
      week_key varchar(10) PRIMARY KEY,
      sent_at timestamptz NOT NULL DEFAULT now(),
      messages integer NOT NULL DEFAULT 0
    )`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.sequelize.query('DROP TABLE sent_digests')
  await qi.sequelize.query('DROP TABLE maintenance_task_log')
  await qi.sequelize.query('DROP TABLE maintenance_tasks')
  await qi.sequelize.query('DROP TABLE stock_services')
  await qi.sequelize.query('DROP TABLE stock_runs')
  await qi.sequelize.query('DROP TABLE stock_items')
}
