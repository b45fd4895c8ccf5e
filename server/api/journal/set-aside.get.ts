// Admins: the journal entries that could never be stored, newest first, each with its reason.
export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const live = useLive()
  return { ...journalHealth(live.journalStats()), entries: await live.journalSetAside(50) }
})
