// Liveness for scripts and monitors: says whether the database answers. Public, reveals nothing else.
export default defineEventHandler(async () => {
  const database = await useDatabase().sequelize.authenticate().then(() => 'up', () => 'down')
  return { status: 'ok', database }
})
