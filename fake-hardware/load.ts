import { existsSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import type { Layout } from '#shared/schemas/layout'
import { validateLayout } from '#shared/signalling'
import { autoPlans, checkPlans, TrainPlanFile, type TrainPlan } from './plan'
import { createRandom } from './random'
import { parseScript, unknownIds, type Scheduled } from './script'

/** Reading the fake layout's files. Each loader throws an Error whose message says what is wrong, and where. */

const HERE = fileURLToPath(new URL('.', import.meta.url))

function readJson(path: string, what: string): unknown {
  let text: string
  try {
    text = readFileSync(path, 'utf8')
  } catch (e) {
    throw new Error(`cannot read the ${what} ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`, { cause: e })
  }
  try {
    return JSON.parse(text)
  } catch (e) {
    throw new Error(`the ${what} ${path} is not JSON: ${(e as Error).message}`, { cause: e })
  }
}

export function loadLayout(path: string): Layout {
  const r = validateLayout(readJson(path, 'layout'))
  if (!r.ok) throw new Error(`the layout ${path} is not valid:\n${r.errors.map(e => `  ${e.path}: ${e.message}`).join('\n')}`)
  return r.layout
}

/** The plan file the fake layout uses for a slug when none is given (fake-hardware/trains/<slug>.json). */
export function defaultPlanFile(slug: string): string | null {
  const p = resolve(HERE, 'trains', `${slug}.json`)
  return existsSync(p) ? p : null
}

export interface LoadedPlans {
  plans: TrainPlan[]
  /** Where they came from, for the log. */
  source: string
}

export function loadPlans(layout: Layout, file: string | null, slug: string, count: number, seed: number): LoadedPlans {
  const path = file ?? defaultPlanFile(slug)
  if (path === null) {
    const plans = autoPlans(layout, count, createRandom(seed ^ 0x5eed))
    return { plans, source: `${plans.length} trains picked on the layout's round trips` }
  }
  const parsed = TrainPlanFile.safeParse(readJson(path, 'train plan file'))
  if (!parsed.success) throw new Error(`the train plan file ${path} is not valid:\n${parsed.error.issues.map(i => `  ${i.path.join('.')}: ${i.message}`).join('\n')}`)
  const errors = checkPlans(layout, parsed.data.trains)
  if (errors.length) throw new Error(`the train plans in ${path} do not fit the layout:\n${errors.map(e => `  ${e.path}: ${e.message}`).join('\n')}`)
  return { plans: parsed.data.trains, source: path }
}

export interface LoadedScript {
  events: Scheduled[]
  /** Topics naming ids the layout does not have (published all the same). */
  unknown: string[]
}

export function loadScript(layout: Layout, path: string, speedFactor: number): LoadedScript {
  const r = parseScript(readJson(path, 'script'), speedFactor)
  if (!r.ok) throw new Error(`the script ${path} is not valid:\n${r.errors.map(e => `  ${e}`).join('\n')}`)
  return { events: r.events, unknown: unknownIds(layout, r.events) }
}
