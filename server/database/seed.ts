import type { Database } from './connection'
import { DEMO_ACCOUNTS } from './demo-accounts'
import { hashPasswordOutsideNitro } from './password-hash'
import demoLayout from '#shared/layouts/demo-layout.json' with { type: 'json' }

export const DEMO_LAYOUT_SLUG = 'wrenfold'

/** The fake layout's MQTT sign-in (a device like any other; its password can be changed by environment). */
export const FAKE_LAYOUT_DEVICE = { username: 'fake-layout', name: 'Fake layout (simulated controllers)' }
export const fakeLayoutPassword = () => process.env.BLOCKBELL_FAKE_MQTT_PASSWORD || 'fake-layout-demo'

/** Inserts the demo accounts and the demo layout when they are missing. Running it again changes nothing. */
export async function seedDemoData({ sequelize, models }: Database): Promise<{ created: string[] }> {
  const created: string[] = []
  await sequelize.transaction(async (transaction) => {
    for (const account of DEMO_ACCOUNTS) {
      const existing = await models.User.findOne({ where: { email: account.email }, transaction })
      if (existing) continue
      await models.User.create({
        email: account.email, name: account.name, role: account.role,
        passwordHash: await hashPasswordOutsideNitro(account.password),
      }, { transaction })
      created.push(`user ${account.email}`)
    }
    const layout = await models.Layout.findOne({ where: { slug: DEMO_LAYOUT_SLUG }, transaction })
    if (!layout) {
      const row = await models.Layout.create({
        slug: DEMO_LAYOUT_SLUG, name: demoLayout.name, definition: demoLayout, version: 1,
      }, { transaction })
      await models.LayoutVersion.create({ layoutId: row.id, version: 1, definition: demoLayout, createdBy: null }, { transaction })
      created.push(`layout ${DEMO_LAYOUT_SLUG}`)
    }
    const device = await models.Device.findOne({ where: { username: FAKE_LAYOUT_DEVICE.username }, transaction })
    if (!device) {
      await models.Device.create({ ...FAKE_LAYOUT_DEVICE, layoutId: null, passwordHash: await hashPasswordOutsideNitro(fakeLayoutPassword()) }, { transaction })
      created.push(`device ${FAKE_LAYOUT_DEVICE.username}`)
    }
  })
  return { created }
}
