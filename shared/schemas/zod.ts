import { z } from 'zod'

/**
 * zod for every Blockbell schema, set to parse without generated code (`jitless`). Without it, zod tries
 * `new Function` when a schema is defined, and the browser reports that as a violation of the app's
 * Content-Security-Policy (which allows no eval). Import `z` from here, never from 'zod' directly.
 */
z.config({ jitless: true })

export { z }
