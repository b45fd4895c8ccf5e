import type { QueryInterface } from 'sequelize'

/**
 * Uploaded photos: the bytes live in Nitro's `uploads` storage (files or an S3-compatible bucket), this table
 * says what each one is. A cleaning lists the photos taken of it.
 */
export async function up({ context: qi }: { context: QueryInterface }) {
  const q = (sql: string) => qi.sequelize.query(sql)
  await q(`
    CREATE TABLE uploads (
      id uuid PRIMARY KEY,
      content_type varchar(64) NOT NULL,
      bytes integer NOT NULL,
      width integer NOT NULL,
      height integer NOT NULL,
      original_name varchar(255),
      uploaded_by integer REFERENCES users(id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    )`)
  await q(`ALTER TABLE cleanings ADD COLUMN photos uuid[] NOT NULL DEFAULT '{}'`)
}

export async function down({ context: qi }: { context: QueryInterface }) {
  await qi.sequelize.query('ALTER TABLE cleanings DROP COLUMN photos')
  await qi.sequelize.query('DROP TABLE uploads')
}
