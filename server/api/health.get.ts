// Liveness for scripts and monitors: whether the database answers and the journal is writing. Public: it
// gives states and counts, which process answered and how many layouts it runs (several processes behind a
// load balancer), nothing else; a signed-in admin also gets the layouts' slugs. 503 while the journal is stalled.
export default defineEventHandler(async (event) => {
  const database = await useDatabase().sequelize.authenticate().then(() => 'up', () => 'down')
  const journal = journalHealth(useLive().journalStats())
  if (journal.status !== 'ok') setResponseStatus(event, 503)
  const { instance, owns } = useLive().ownerInfo()
  const admin = database === 'up' && await signedInRole(event).catch(() => null) === 'admin'
  return {
    status: journal.status === 'ok' ? 'ok' : 'degraded', database, journal: { status: journal.status, setAside: journal.setAside },
    instance, layoutsOwned: owns.length, ...(admin ? { owns } : {}),
  }
})
