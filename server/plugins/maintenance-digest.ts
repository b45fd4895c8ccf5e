import { Cron } from 'croner'

/**
 * Schedules the weekly maintenance digest (server/utils/maintenance-digest.ts). Every server runs the
 * schedule; the sent_digests row of the week makes sure only one of them sends. BLOCKBELL_DIGEST_CRON sets
 * when (cron syntax, default Mondays 08:00), BLOCKBELL_DIGEST_TIMEZONE its time zone (default the server's);
 * BLOCKBELL_DIGEST_CRON=off turns it off.
 */
export default defineNitroPlugin((nitroApp) => {
  const pattern = process.env.BLOCKBELL_DIGEST_CRON ?? '0 8 * * 1'
  if (pattern === 'off') return
  const options = { timezone: process.env.BLOCKBELL_DIGEST_TIMEZONE || undefined, protect: true }
  try {
    new Cron(pattern, { ...options, paused: true }).stop()
  } catch (error) {
    throw new Error(`BLOCKBELL_DIGEST_CRON / BLOCKBELL_DIGEST_TIMEZONE: ${(error as Error).message} (e.g. "0 8 * * 1" for Mondays 08:00, or "off")`, { cause: error })
  }
  const job = new Cron(pattern, options, async () => {
    try {
      const result = await sendWeeklyDigest({ sequelize: useDatabase().sequelize, queue: queueMail, publicUrl: useMailSettings().publicUrl })
      console.log(`[blockbell] maintenance digest ${result.week}: ${result.alreadySent ? 'already sent by a server' : `${result.messages} messages queued`}`)
    } catch (error) {
      console.error('[blockbell] maintenance digest not sent:', (error as Error).message)
    }
  })
  nitroApp.hooks.hook('close', () => job.stop())
})
