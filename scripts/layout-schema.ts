// Writes docs/layout.schema.json from the zod layout schema: `npm run schema:layout`.
import { writeFileSync } from 'node:fs'
import { layoutJsonSchema } from '#shared/layouts/json-schema'

const file = new URL('../docs/layout.schema.json', import.meta.url)
writeFileSync(file, `${JSON.stringify(layoutJsonSchema(), null, 2)}\n`)
console.log(`wrote ${file.pathname}`)
