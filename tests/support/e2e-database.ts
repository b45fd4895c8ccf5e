// Direct access to the end-to-end server's database, for what a test cannot wait for (a link's expiry).
import { QueryTypes, type Sequelize } from 'sequelize'
import { databaseSettings } from '../../server/database/config'
import { connectWithoutModels } from './postgres'

let connection: Sequelize | undefined

function e2eDatabase(): Sequelize {
  connection ??= connectWithoutModels({ ...databaseSettings(), database: process.env.BLOCKBELL_E2E_DB_NAME ?? 'blockbell_e2e' })
  return connection
}

export async function e2eQuery<T extends object>(sql: string, replacements: Record<string, unknown> = {}): Promise<T[]> {
  return e2eDatabase().query<T>(sql, { replacements, type: QueryTypes.SELECT })
}

export async function closeE2eDatabase(): Promise<void> {
  await connection?.close()
  connection = undefined
}
