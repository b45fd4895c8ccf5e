import { openDatabase, type Database } from '../database/connection'

let database: Database | undefined

/** The process-wide database connection (opened on first use; closed by the database plugin). */
export function useDatabase(): Database {
  database ??= openDatabase()
  return database
}

export async function closeDatabase(): Promise<void> {
  if (!database) return
  const open = database
  database = undefined
  await open.sequelize.close()
}
