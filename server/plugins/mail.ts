// Starts the outbox dispatcher: messages queued before a restart go out now, failed sends are retried
// with backoff. The database plugin stops it on shutdown, before closing the pool.
export default defineNitroPlugin(() => {
  const settings = useMailSettings()
  const target = settings.smtpUrl ? 'the SMTP server in SMTP_URL' : `the local fake mail server on 127.0.0.1:${settings.fakeSmtpPort}`
  console.log(`[blockbell] mail goes to ${target}; links point to ${settings.publicUrl}`)
  useMailOutbox().start()
})
