// The local fake mail server that `npm start` and `npm test` run when no SMTP_URL is set:
//   tsx scripts/fake-smtp.ts [--port 2525] [--dir .data/mail]
// Accepts every message on 127.0.0.1 (addresses under .invalid are refused with 451) and keeps it in the folder.
import { resolve } from 'node:path'
import { parseArgs } from 'node:util'
import { startFakeSmtp } from '../server/mail/fake-smtp'

const { values } = parseArgs({
  options: {
    port: { type: 'string', default: process.env.FAKE_SMTP_PORT ?? '2525' },
    dir: { type: 'string', default: '.data/mail' },
    help: { type: 'boolean', default: false },
  },
})
if (values.help) {
  console.log('Usage: tsx scripts/fake-smtp.ts [--port 2525] [--dir .data/mail]')
  process.exit(0)
}
const port = Number(values.port)
if (!Number.isInteger(port) || port < 1 || port > 65535) {
  console.error(`--port: a port number from 1 to 65535, not "${values.port}"`)
  process.exit(2)
}
const dir = resolve(values.dir)
const server = await startFakeSmtp({ port, dir, log: line => console.log(`[fake-smtp] ${line}`) })
console.log(`[fake-smtp] listening on 127.0.0.1:${server.port}, keeping messages in ${dir}`)
for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.once(signal, () => { void server.close().then(() => process.exit(0)) })
}
