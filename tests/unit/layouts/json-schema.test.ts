import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import Ajv2020 from 'ajv/dist/2020'
import { layoutJsonSchema } from '#shared/layouts/json-schema'
import { LayoutDefinition } from '#shared/schemas/layout'
import demoLayout from '#shared/layouts/demo-layout.json' with { type: 'json' }
import { lineLayout } from '../../support/layout-fixtures'

// The published layout format (docs/layout.schema.json) checked by a general-purpose JSON Schema 2020-12
// validator from npm (ajv, its ajv/dist/2020 entry point) against the same files the zod schema judges.
const published = JSON.parse(readFileSync(new URL('../../../docs/layout.schema.json', import.meta.url), 'utf8'))
const fixture = (name: string) => JSON.parse(readFileSync(new URL(`../../fixtures/layouts/${name}`, import.meta.url), 'utf8'))
const ajv = new Ajv2020({ allErrors: true, strict: false })
const validate = ajv.compile(published)

describe('docs/layout.schema.json', () => {
  it('is the document generated from the zod schema (run `npm run schema:layout` after changing it)', () => {
    expect(published).toEqual(layoutJsonSchema())
  })

  it('declares JSON Schema 2020-12', () => {
    expect(published.$schema).toBe('https://json-schema.org/draft/2020-12/schema')
  })

  it('accepts the demo layout and a layout as Blockbell exports it (defaults filled in)', () => {
    expect(validate(demoLayout), JSON.stringify(validate.errors)).toBe(true)
    const exported = LayoutDefinition.parse(lineLayout('Hollin bank'))
    expect(validate(exported), JSON.stringify(validate.errors)).toBe(true)
  })

  it('accepts a file that leaves the optional parts out, as zod does', () => {
    const minimal = { schema: 1, name: 'Sallow halt', scale: { name: 'N', ratio: 148 }, blocks: [{ id: 'B1', name: 'Sallow', lengthMm: 500, detectors: [] }], links: [] }
    expect(LayoutDefinition.safeParse(minimal).success).toBe(true)
    expect(validate(minimal)).toBe(true)
  })

  it.each(['bad-shape.json', 'no-blocks.json'])('rejects %s, which zod rejects, at the same places', (name) => {
    const file = fixture(name)
    const zod = LayoutDefinition.safeParse(file)
    expect(zod.success).toBe(false)
    expect(validate(file)).toBe(false)
    // each path zod names has an ajv error at or under it (ajv writes /blocks/0/id for blocks[0].id)
    const ajvPaths = validate.errors!.map(e => e.instancePath)
    for (const issue of zod.error!.issues) {
      const pointer = `/${issue.path.join('/')}`
      expect(ajvPaths.some(p => p === pointer || p.startsWith(`${pointer}/`) || (pointer === '/' && p === '')), `${pointer} in ${ajvPaths.join(', ')}`).toBe(true)
    }
  })

  it('leaves cross-references to Blockbell: a file with unknown block ids has the right shape', () => {
    expect(validate(fixture('unknown-references.json'))).toBe(true)
  })
})
