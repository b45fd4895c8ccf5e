import { stringify } from 'csv-stringify/sync'
import type { H3Event } from 'h3'
import { validateLayout } from '#shared/signalling'
import type { Layout } from '#shared/schemas/layout'
import type { WiringItem } from '#shared/types/layouts'
import { layoutTopic, relative } from '#shared/live/topics'

/** Every detector, signal and turnout of a layout with its block, area, MQTT topic and assigned controller. */
export function wiringItems(slug: string, layout: Layout, assigned: Map<string, { id: number, name: string }>): WiringItem[] {
  const signalArea = new Map(layout.areas.flatMap(a => a.signals.map(s => [s, a.name] as const)))
  const turnoutArea = new Map(layout.areas.flatMap(a => a.turnouts.map(t => [t, a.name] as const)))
  // a block is in the area of the signal that protects it or the turnout in it (as the Panel draws the bands)
  const blockArea = new Map<string, string>()
  for (const s of layout.signals) if (signalArea.has(s.id)) blockArea.set(s.protects, signalArea.get(s.id)!)
  for (const t of layout.turnouts) if (turnoutArea.has(t.id)) blockArea.set(t.block, turnoutArea.get(t.id)!)
  const device = (kind: string, id: string) => assigned.get(`${kind}:${id}`) ?? null
  const item = (kind: WiringItem['kind'], id: string, block: string, area: string | null, topic: string): WiringItem => {
    const d = device(kind, id)
    return { kind, id, block, area, topic, deviceId: d?.id ?? null, device: d?.name ?? null }
  }
  return [
    ...layout.blocks.flatMap(b => b.detectors.map(d => item('detector', d, b.id, blockArea.get(b.id) ?? null, layoutTopic(slug, relative.detector(d))))),
    ...layout.signals.map(s => item('signal', s.id, s.from, signalArea.get(s.id) ?? null, layoutTopic(slug, relative.signal(s.id)))),
    ...layout.turnouts.map(t => item('turnout', t.id, t.block, turnoutArea.get(t.id) ?? null, layoutTopic(slug, relative.turnout(t.id)))),
  ]
}

export async function layoutWiring(id: number): Promise<{ slug: string, name: string, items: WiringItem[] }> {
  const { Layout: LayoutModel, LayoutWiring, Device } = useDatabase().models
  const row = await LayoutModel.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: `id: no layout with id ${id}` })
  const checked = validateLayout(row.definition)
  if (!checked.ok) throw createError({ statusCode: 409, message: `The current version of ${row.name} does not validate: fix it in the editor first.` })
  const wiring = await LayoutWiring.findAll({ where: { layoutId: id } })
  const devices = new Map((await Device.findAll({ attributes: ['id', 'name', 'username'] })).map(d => [d.id, d]))
  const assigned = new Map(wiring.flatMap(w => devices.has(w.deviceId) ? [[`${w.kind}:${w.itemId}`, { id: w.deviceId, name: devices.get(w.deviceId)!.name }] as const] : []))
  return { slug: row.slug, name: row.name, items: wiringItems(row.slug, checked.layout, assigned) }
}

/** Assigns one item to a controller (or clears the assignment). */
export async function assignWiring(id: number, body: { kind: WiringItem['kind'], item: string, deviceId: number | null }) {
  const { items } = await layoutWiring(id)
  if (!items.some(i => i.kind === body.kind && i.id === body.item)) {
    throw createError({ statusCode: 400, message: `item: the layout has no ${body.kind} "${body.item}"`, data: { issues: [{ path: 'item', message: `the layout has no ${body.kind} "${body.item}"` }] } })
  }
  const { LayoutWiring, Device } = useDatabase().models
  if (body.deviceId === null) {
    await LayoutWiring.destroy({ where: { layoutId: id, kind: body.kind, itemId: body.item } })
  } else {
    if (!await Device.findByPk(body.deviceId)) throw createError({ statusCode: 400, message: `deviceId: no device with id ${body.deviceId}`, data: { issues: [{ path: 'deviceId', message: `no device with id ${body.deviceId}` }] } })
    await LayoutWiring.upsert({ layoutId: id, kind: body.kind, itemId: body.item, deviceId: body.deviceId })
  }
  return (await layoutWiring(id)).items.find(i => i.kind === body.kind && i.id === body.item)!
}

export const WIRING_CSV_COLUMNS = ['kind', 'id', 'block', 'area', 'topic', 'controller'] as const

/** The wiring schedule as CSV (RFC 4180: CRLF line ends, quoted where needed), as an attachment. */
export async function wiringCsv(event: H3Event, id: number): Promise<string> {
  const { slug, items } = await layoutWiring(id)
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${slug}-wiring.csv"`)
  return stringify(items.map(i => [i.kind, i.id, i.block, i.area ?? '', i.topic, i.device ?? '']), {
    header: true, columns: [...WIRING_CSV_COLUMNS], record_delimiter: 'windows',
  })
}
