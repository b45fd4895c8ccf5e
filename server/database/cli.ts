// Database command line: `tsx server/database/cli.ts up | down | status | seed | accounts`.
// Uses the same connection settings as the server (server/database/config.ts).
import { openDatabase } from './connection'
import { createMigrator } from './migrator'
import { seedDemoData } from './seed'
import { DEMO_ACCOUNTS } from './demo-accounts'

const command = process.argv[2] ?? 'status'
const db = openDatabase()
const migrator = createMigrator(db.sequelize)

try {
  if (command === 'up') {
    const done = await migrator.up()
    console.log(done.length ? `migrations applied: ${done.map(m => m.name).join(', ')}` : 'migrations: up to date')
  } else if (command === 'down') {
    const done = await migrator.down()
    console.log(done.length ? `migration reverted: ${done.map(m => m.name).join(', ')}` : 'migrations: nothing to revert')
  } else if (command === 'status') {
    const executed = await migrator.executed()
    const pending = await migrator.pending()
    console.log(`applied: ${executed.map(m => m.name).join(', ') || 'none'}; pending: ${pending.map(m => m.name).join(', ') || 'none'}`)
  } else if (command === 'seed') {
    const { created } = await seedDemoData(db)
    console.log(created.length ? `demo data added: ${created.join(', ')}` : 'demo data: already present')
  } else if (command === 'accounts') {
    console.log('  Demo sign-ins (the invented Fernhollow Light Railway club):')
    for (const a of DEMO_ACCOUNTS) console.log(`    ${a.role.padEnd(10)} ${a.email.padEnd(32)} ${a.password}`)
  } else {
    console.error(`unknown command "${command}"; use up, down, status or seed`)
    process.exitCode = 2
  }
} catch (error) {
  console.error(`database ${command} failed: ${(error as Error).message}`)
  process.exitCode = 1
} finally {
  await db.sequelize.close()
}
