import type { H3Event } from 'h3'
import { UniqueConstraintError } from 'sequelize'
import type { User as SessionUser } from '#auth-utils'
import type { Invitation } from '../database/models'
import { invitationMail } from '../mail/templates'
import type { InvitationView } from '#shared/types/mail'
import type { AcceptInvitationBody, InviteBody } from '#shared/schemas/mail'

export const INVITATION_LIFETIME_MS = 72 * 3_600_000

const open = { acceptedAt: null, revokedAt: null }

function toInvitationView(row: Invitation & { inviter?: { name: string } | null, mail?: { state: InvitationView['mailState'] } | null }): InvitationView {
  return {
    id: row.id, email: row.email, role: row.role, invitedBy: row.inviter?.name ?? null,
    createdAt: row.createdAt.toISOString(), expiresAt: row.expiresAt.toISOString(),
    expired: row.expiresAt.getTime() <= Date.now(), mailState: row.mail?.state ?? null,
  }
}

/** Invitations neither accepted nor revoked (expired ones too, so an admin can send them again). */
export async function listOpenInvitations(): Promise<InvitationView[]> {
  const { models } = useDatabase()
  const rows = await models.Invitation.findAll({
    where: open, order: [['createdAt', 'DESC'], ['id', 'DESC']],
    include: [{ model: models.User, as: 'inviter', attributes: ['name'] }, { model: models.OutboxMessage, as: 'mail', attributes: ['state'] }],
  })
  return rows.map(row => toInvitationView(row as Parameters<typeof toInvitationView>[0]))
}

/**
 * Invites an address with a role and queues the mail in the same transaction. Inviting an address again
 * replaces its open invitation (the old link stops working); an address with an account is refused.
 */
export async function inviteByEmail(inviter: SessionUser, body: InviteBody): Promise<{ id: number }> {
  const { sequelize, models } = useDatabase()
  const { token, hash } = newOneTimeToken()
  const expiresAt = new Date(Date.now() + INVITATION_LIFETIME_MS)
  try {
    return await sequelize.transaction(async (transaction) => {
      if (await models.User.findOne({ where: { email: body.email }, transaction })) {
        throw createError({ statusCode: 409, message: `email: ${body.email} already has an account`, data: { issues: [{ path: 'email', message: 'This address already has an account' }] } })
      }
      await models.Invitation.update({ revokedAt: new Date() }, { where: { email: body.email, ...open }, transaction })
      const mail = invitationMail({
        inviterName: inviter.name, role: body.role, expiresAt,
        link: publicLink(`/invitation/${token}`), publicUrl: useMailSettings().publicUrl,
      })
      const queued = await queueMail({ kind: 'invitation', to: body.email, ...mail }, transaction)
      const row = await models.Invitation.create({
        email: body.email, role: body.role, tokenHash: hash, invitedBy: inviter.id, outboxId: queued.id, expiresAt,
      }, { transaction })
      return { id: row.id }
    })
  } catch (error) {
    // Two admins inviting the same address at the same moment: one wins.
    if (error instanceof UniqueConstraintError) throw createError({ statusCode: 409, message: `email: ${body.email} was invited a moment ago; reload the list` })
    throw error
  }
}

/** Revokes an open invitation. Revoking one again changes nothing; an accepted one cannot be revoked. */
export async function revokeInvitation(id: number): Promise<void> {
  const row = await useDatabase().models.Invitation.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: `id: no invitation with id ${id}` })
  if (row.acceptedAt) throw createError({ statusCode: 409, message: 'This invitation has already been accepted: disable the account on the People screen instead.' })
  if (!row.revokedAt) await row.update({ revokedAt: new Date() })
}

function refusal(row: Invitation | null): string | null {
  if (!row) return 'This invitation link is not known. Ask your admin for a new invitation.'
  if (row.acceptedAt) return 'This invitation has already been used. Sign in instead, or ask your admin for a new one.'
  if (row.revokedAt) return 'This invitation was withdrawn. Ask your admin for a new one.'
  if (row.expiresAt.getTime() <= Date.now()) return 'This invitation has expired (links work for 72 hours). Ask your admin to send it again.'
  return null
}

/** What the invitation page shows before the person accepts: the address and the role. */
export async function checkInvitation(token: string): Promise<{ email: string, role: Invitation['role'], expiresAt: string }> {
  const row = await useDatabase().models.Invitation.findOne({ where: { tokenHash: hashOneTimeToken(token) } })
  const refused = refusal(row)
  if (refused) throw createError({ statusCode: 410, message: refused })
  return { email: row!.email, role: row!.role, expiresAt: row!.expiresAt.toISOString() }
}

/** Creates the account with the invited role, uses the link up, and signs the new person in. */
export async function acceptInvitation(event: H3Event, body: AcceptInvitationBody): Promise<SessionUser> {
  const { sequelize, models } = useDatabase()
  const passwordHash = await hashPassword(body.password)
  const user = await sequelize.transaction(async (transaction) => {
    const row = await models.Invitation.findOne({ where: { tokenHash: hashOneTimeToken(body.token) }, lock: transaction.LOCK.UPDATE, transaction })
    const refused = refusal(row)
    if (refused) throw createError({ statusCode: 410, message: refused })
    if (await models.User.findOne({ where: { email: row!.email }, transaction })) {
      throw createError({ statusCode: 409, message: `${row!.email} already has an account: sign in instead.` })
    }
    const created = await models.User.create({ email: row!.email, name: body.name, role: row!.role, passwordHash }, { transaction })
    await row!.update({ acceptedAt: new Date(), acceptedUserId: created.id }, { transaction })
    return created
  })
  // the same session as a password sign-in: a fresh id, the account's session version, the cookie for this address
  return openSession(event, await user.reload())
}
