import { createMigrator } from '../database/migrator'

// Checks the database at start-up (without failing the server: pages say so while it is unreachable)
// and closes the pool when Nitro shuts down.
export default defineNitroPlugin((nitroApp) => {
  const { sequelize } = useDatabase()
  createMigrator(sequelize).pending()
    .then((pending) => {
      if (pending.length) console.warn(`[blockbell] database migrations pending: ${pending.map(m => m.name).join(', ')} (run npm run db:migrate)`)
    })
    .catch((error: Error) => console.error(`[blockbell] database not reachable at start-up: ${error.message}`))
  // The live side writes its last journal entries on close: close it before the pool it writes through.
  nitroApp.hooks.hook('close', async () => {
    await closeLive()
    await closeMail()
    await closeDatabase()
  })
})
