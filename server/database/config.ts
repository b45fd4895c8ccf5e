import { existsSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'

/** Connection settings for PostgreSQL, from the environment with working local defaults. */
export interface DatabaseSettings {
  host: string
  port: number
  database: string
  username: string
  password: string
}

const LOCAL_PASSWORD_FILE = resolve(process.cwd(), '.data/pg/password')

export function databaseSettings(env: NodeJS.ProcessEnv = process.env): DatabaseSettings {
  if (env.DATABASE_URL) {
    const url = new URL(env.DATABASE_URL)
    return {
      host: url.hostname,
      port: Number(url.port || 5432),
      database: decodeURIComponent(url.pathname.replace(/^\//, '')),
      username: decodeURIComponent(url.username),
      password: decodeURIComponent(url.password),
    }
  }
  const localPassword = existsSync(LOCAL_PASSWORD_FILE) ? readFileSync(LOCAL_PASSWORD_FILE, 'utf8').trim() : ''
  return {
    host: env.BLOCKBELL_DB_HOST || '127.0.0.1',
    port: Number(env.BLOCKBELL_DB_PORT || 54329),
    database: env.BLOCKBELL_DB_NAME || 'blockbell',
    username: env.BLOCKBELL_DB_USER || 'blockbell',
    password: env.BLOCKBELL_DB_PASSWORD ?? localPassword,
  }
}
