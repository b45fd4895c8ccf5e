import type { H3Event } from 'h3'
import { Op, type Transaction } from 'sequelize'
import type { User } from '../database/models'
import type { PersonView } from '#shared/types/people'
import type { CreateUserBody, UpdateUserBody } from '#shared/schemas/account'

export function toPersonView(user: User): PersonView {
  return {
    id: user.id, email: user.email, name: user.name, role: user.role,
    disabled: Boolean(user.disabledAt), createdAt: user.createdAt.toISOString(),
  }
}

export async function listPeople(): Promise<PersonView[]> {
  const rows = await useDatabase().models.User.findAll({ order: [['name', 'ASC'], ['id', 'ASC']] })
  return rows.map(toPersonView)
}

export async function createPerson(body: CreateUserBody): Promise<PersonView> {
  const { User } = useDatabase().models
  if (await User.findOne({ where: { email: body.email } })) {
    throw createError({ statusCode: 409, message: `email: ${body.email} already has an account` })
  }
  const row = await User.create({
    email: body.email, name: body.name, role: body.role, passwordHash: await hashPassword(body.password),
  })
  return toPersonView(row)
}

async function otherActiveAdmins(id: number, transaction: Transaction): Promise<number> {
  const { User } = useDatabase().models
  const admins = await User.findAll({
    where: { role: 'admin', disabledAt: null, id: { [Op.ne]: id } },
    lock: transaction.LOCK.UPDATE, transaction,
  })
  return admins.length
}

/** Changes name, role or disabled state. The last active admin can be neither demoted nor disabled. */
export async function updatePerson(id: number, body: UpdateUserBody): Promise<PersonView> {
  const { sequelize, models } = useDatabase()
  return sequelize.transaction(async (transaction) => {
    const row = await models.User.findByPk(id, { lock: transaction.LOCK.UPDATE, transaction })
    if (!row) throw createError({ statusCode: 404, message: `id: no person with id ${id}` })
    const losesAdmin = row.role === 'admin' && !row.disabledAt
      && ((body.role !== undefined && body.role !== 'admin') || body.disabled === true)
    if (losesAdmin && await otherActiveAdmins(id, transaction) === 0) {
      throw createError({ statusCode: 409, message: 'This is the last active admin: make another admin first, then change this one.' })
    }
    const disabling = body.disabled === true && !row.disabledAt
    const roleChanges = body.role !== undefined && body.role !== row.role
    if (body.name !== undefined) row.name = body.name
    if (body.role !== undefined) row.role = body.role
    if (body.disabled !== undefined) row.disabledAt = body.disabled ? (row.disabledAt ?? new Date()) : null
    await row.save({ transaction })
    // A disabled account or a changed role ends the account's sessions and closes its panels at once.
    if (disabling || roleChanges) {
      row.sessionVersion = await bumpSessionVersion(id, { transaction, releaseAreas: disabling || row.role === 'viewer' })
    }
    return toPersonView(row)
  })
}

/** Checks the current password and stores a new one; ends the account's other sessions, keeps this one. */
export async function changeOwnPassword(event: H3Event, id: number, currentPassword: string, newPassword: string): Promise<void> {
  const row = await useDatabase().models.User.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: 'Account not found' })
  if (!await verifyPassword(row.passwordHash, currentPassword)) {
    throw createError({ statusCode: 400, message: 'currentPassword: the current password is not right', data: { issues: [{ path: 'currentPassword', message: 'The current password is not right' }] } })
  }
  row.passwordHash = await hashPassword(newPassword)
  await row.save()
  row.sessionVersion = await bumpSessionVersion(id)
  await openSession(event, row)
}
