import { DataTypes, type QueryInterface } from 'sequelize'

/**
 * session_train_steps: the journal's train description entries and signals passed at danger of each session,
 * narrow and in journal order, for the time-distance graph (a long night has hundreds of thousands of them;
 * read from `events`, each costs a heap row with its JSON payload). A trigger on `events` copies each such
 * entry in the same transaction that journals it, so a running session's graph is as complete as its log;
 * the rows go with their session. `at_ms` is the entry's time, or for a signal passed at danger the time the
 * alarm names.
 * session_graph_data: once a session has ended, each train's moves (description entering a block, or leaving the
 * block it held) and the signals passed at danger, as one JSON value each: every route's graph is drawn from
 * them without reading the steps again.
 */
const COPY_FUNCTION = `
CREATE FUNCTION session_train_steps_copy() RETURNS trigger LANGUAGE plpgsql AS $$
DECLARE
  alarm_at text := NEW.payload #>> '{alarm,at}';
BEGIN
  IF NEW.type = 'description' THEN
    INSERT INTO session_train_steps (session_id, event_id, at_ms, block, description, reason, signal)
    VALUES (NEW.session_id, NEW.id, (extract(epoch FROM NEW.at) * 1000)::bigint, NEW.subject,
      NEW.payload ->> 'description', NEW.payload ->> 'reason', NULL);
  ELSE
    INSERT INTO session_train_steps (session_id, event_id, at_ms, block, description, reason, signal)
    VALUES (NEW.session_id, NEW.id,
      CASE WHEN alarm_at ~ '^[0-9]{1,15}$' THEN alarm_at::bigint ELSE (extract(epoch FROM NEW.at) * 1000)::bigint END,
      NEW.payload #>> '{alarm,block}', NEW.payload #>> '{alarm,description}', 'spad', NEW.payload #>> '{alarm,signal}');
  END IF;
  RETURN NULL;
END
$$`

const STEP_OR_SPAD = (row: string) => `${row}.session_id IS NOT NULL AND (${row}.type = 'description'
  OR (${row}.type = 'alarm' AND coalesce(${row}.payload #>> '{alarm,kind}', 'spad') = 'spad'))`

export async function up({ context: qi }: { context: QueryInterface }) {
  await qi.createTable('session_train_steps', {
    session_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'operating_sessions', key: 'id' }, onDelete: 'CASCADE' },
    event_id: { type: DataTypes.BIGINT, allowNull: false, primaryKey: true },
    at_ms: { type: DataTypes.BIGINT, allowNull: false },
    block: { type: DataTypes.TEXT, allowNull: true },
    // null: the description left the block
    description: { type: DataTypes.TEXT, allowNull: true },
    // the description entry's reason (step, interpose, clear…), or 'spad'
    reason: { type: DataTypes.TEXT, allowNull: true },
    signal: { type: DataTypes.TEXT, allowNull: true },
  })
  await qi.createTable('session_graph_data', {
    session_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'operating_sessions', key: 'id' }, onDelete: 'CASCADE' },
    // the last train step taken in
    through_event_id: { type: DataTypes.BIGINT, allowNull: false },
    trains: { type: DataTypes.JSON, allowNull: false },
    danger_passes: { type: DataTypes.JSON, allowNull: false },
  })
  await qi.sequelize.query(COPY_FUNCTION)
  await qi.sequelize.query(`CREATE TRIGGER events_session_train_steps AFTER INSERT ON events FOR EACH ROW
    WHEN (${STEP_OR_SPAD('NEW')}) EXECUTE FUNCTION session_train_steps_copy()`)
  // what is already journaled, the same way
  await qi.sequelize.query(`INSERT INTO session_train_steps (session_id, event_id, at_ms, block, description, reason, signal)
    SELECT e.session_id, e.id,
      CASE WHEN e.type = 'alarm' AND e.payload #>> '{alarm,at}' ~ '^[0-9]{1,15}$' THEN (e.payload #>> '{alarm,at}')::bigint
        ELSE (extract(epoch FROM e.at) * 1000)::bigint END,
      CASE WHEN e.type = 'alarm' THEN e.payload #>> '{alarm,block}' ELSE e.subject END,
      CASE WHEN e.type = 'alarm' THEN e.payload #>> '{alarm,description}' ELSE e.payload ->> 'description' END,
      CASE WHEN e.type = 'alarm' THEN 'spad' ELSE e.payload ->> 'reason' END,
      CASE WHEN e.type = 'alarm' THEN e.payload #>> '{alarm,signal}' END
    FROM events e JOIN operating_sessions s ON s.id = e.session_id
    WHERE ${STEP_OR_SPAD('e')}`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.sequelize.query('DROP TRIGGER IF EXISTS events_session_train_steps ON events')
  await qi.sequelize.query('DROP FUNCTION IF EXISTS session_train_steps_copy()')
  await qi.dropTable('session_graph_data')
  await qi.dropTable('session_train_steps')
}
