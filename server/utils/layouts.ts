import type { LayoutSummary } from '#shared/types/layouts'

interface StoredDefinition { blocks?: unknown[], signals?: unknown[], areas?: unknown[], scale?: { name?: string } }

export async function listLayouts(): Promise<LayoutSummary[]> {
  const rows = await useDatabase().models.Layout.findAll({ order: [['name', 'ASC']] })
  return rows.map((row) => {
    const def = row.definition as StoredDefinition
    return {
      id: row.id, slug: row.slug, name: row.name, version: row.version,
      scale: def.scale?.name ?? null,
      blocks: def.blocks?.length ?? 0, signals: def.signals?.length ?? 0, areas: def.areas?.length ?? 0,
      updatedAt: row.updatedAt.toISOString(),
    }
  })
}

export async function getLayout(id: number) {
  const row = await useDatabase().models.Layout.findByPk(id)
  if (!row) throw createError({ statusCode: 404, message: `id: no layout with id ${id}` })
  return { id: row.id, slug: row.slug, name: row.name, version: row.version, definition: row.definition }
}
