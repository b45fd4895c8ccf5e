import { z } from '../schemas/zod'
import { LayoutDefinition } from '#shared/schemas/layout'

/**
 * The layout file format as a JSON Schema (2020-12) document, generated from the zod schema, so the
 * published format (docs/layout.schema.json) and the checks the server makes cannot drift apart. It checks
 * the shape a file is written in (defaults may be left out); the cross-references are checked by
 * validateLayout only.
 */
export function layoutJsonSchema(): Record<string, unknown> {
  const generated = z.toJSONSchema(LayoutDefinition, { target: 'draft-2020-12', io: 'input' }) as Record<string, unknown>
  return {
    $schema: 'https://json-schema.org/draft/2020-12/schema',
    $id: 'https://blockbell.example/schemas/layout-1.json',
    title: 'Blockbell layout, format 1',
    description: 'A Blockbell layout file: blocks, links, turnouts, signals, areas of control and the mimic diagram. Ids also name MQTT topics. References between items are checked by Blockbell on import, not by this schema.',
    ...generated,
  }
}
