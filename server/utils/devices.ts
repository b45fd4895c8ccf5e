import type { Device } from '../database/models'
import type { CreateDeviceBody, DeviceView, UpdateDeviceBody } from '#shared/schemas/device'

const toDeviceView = (d: Device): DeviceView => ({ id: d.id, username: d.username, name: d.name, disabled: Boolean(d.disabledAt), createdAt: d.createdAt.toISOString() })

export async function listDevices(): Promise<DeviceView[]> {
  return (await useDatabase().models.Device.findAll({ order: [['username', 'ASC']] })).map(toDeviceView)
}

export async function createDevice(body: CreateDeviceBody): Promise<DeviceView> {
  const { Device } = useDatabase().models
  if (await Device.findOne({ where: { username: body.username } })) {
    throw createError({ statusCode: 409, message: `username: ${body.username} is already taken` })
  }
  const row = await Device.create({ username: body.username, name: body.name, layoutId: null, passwordHash: await hashPassword(body.password) })
  return toDeviceView(row)
}

/** Disables or enables a device, or sets a new password; a disabled device (or one with a new password) is disconnected. */
export async function updateDevice(id: number, body: UpdateDeviceBody): Promise<DeviceView> {
  const row = await useDatabase().models.Device.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: `id: no device with id ${id}` })
  if (body.disabled !== undefined) row.disabledAt = body.disabled ? (row.disabledAt ?? new Date()) : null
  if (body.password !== undefined) row.passwordHash = await hashPassword(body.password)
  await row.save()
  // The broker checks the table only at sign-in: a connection made before must not outlive the change.
  if (row.disabledAt || body.password !== undefined) useLive().disconnectDevice(row.username)
  return toDeviceView(row)
}
