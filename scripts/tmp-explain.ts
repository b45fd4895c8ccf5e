import { writeFileSync } from 'node:fs'
import { createMigrator } from '../server/database/migrator'
import { seedDemoData } from '../server/database/seed'
import { openDatabase } from '../server/database/connection'
import { startThrowawayPostgres } from '../tests/support/postgres'
import { fillBenchSession } from './bench-sessions'

const cluster = await startThrowawayPostgres({ fast: true })
const db = openDatabase(cluster.settings)
await createMigrator(db.sequelize).up()
await seedDemoData(db)
const { session } = await fillBenchSession(db)
writeFileSync('/tmp/sessions-speed-pg.json', JSON.stringify({ ...cluster.settings, session: session.id }))
console.log('ready', JSON.stringify(cluster.settings))
setInterval(() => {}, 60_000)
