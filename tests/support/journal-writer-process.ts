// A separate process that journals entries while its database cannot be reached, so that they go to the
// spill file, then reports and waits to be killed. Used to leave a spill file behind the way a crashed
// server would.
//   tsx tests/support/journal-writer-process.ts <settings json> <spill dir> <layout id> <first n> <count> <memory limit>
import { openDatabase } from '../../server/database/connection'
import { createJournal } from '../../server/live/journal'
import { numbered, waitUntil } from './journal-checks'

const [settingsJson, spillDir, layoutId, first, count, memoryLimit] = process.argv.slice(2)
const db = openDatabase(JSON.parse(settingsJson!))
const journal = createJournal({ sequelize: db.sequelize, spillDir: spillDir!, memoryLimit: Number(memoryLimit), retryMs: 200, log: () => {} })
for (let i = 0; i < Number(count); i++) journal.append(numbered(Number(layoutId), Number(first) + i))

// The first spill takes the entries in memory when the limit is reached, the next one all that came
// meanwhile: with count >= 2 x memory limit, every entry ends up in the spill file. With no database,
// an entry leaves memory only once it is on disk. (spilled also counts files of earlier dead writers.)
await waitUntil(() => journal.stats().queued === 0 && journal.stats().spilled >= Number(count), 'every entry is spilled')
process.stdout.write(`${JSON.stringify(journal.stats())}\n`)
setInterval(() => {}, 1000) // keep running until killed
