// Editor figures on the generated 500-block layout (scripts/lib/bench-layout.ts), in headless chromium with
// the CPU slowed 4x (CDP Emulation.setCPUThrottlingRate) as a stand-in for a tablet:
//   1. time to open /layouts/bench500/edit until every block, berth and signal is drawn (median and worst of BENCH_EDITOR_OPENS);
//   2. a drag of one block: for each pointer move, the time until the block's track is redrawn (DOM updated)
//      and until the frame after it starts, against one 60 Hz frame (16.7 ms), p50 and p95.
// Needs a build in .output (`nuxt build`); starts its own PostgreSQL and server. `npm run bench:editor`.
import { existsSync } from 'node:fs'
import { chromium } from 'playwright-core'
import { seedDemoData } from '../server/database/seed'
import { CHROMIUM } from '../tests/support/browser'
import { DEMO, SessionClient } from '../tests/support/http-client'
import { startThrowawayPostgres } from '../tests/support/postgres'
import { freePort, startServer } from '../tests/support/processes'
import { benchLayout } from './lib/bench-layout'

const THROTTLE = Number(process.env.BENCH_EDITOR_THROTTLE ?? 4)
const OPENS = Number(process.env.BENCH_EDITOR_OPENS ?? 5)
const MOVES = Number(process.env.BENCH_EDITOR_MOVES ?? 120)
const FRAME_MS = 1000 / 60
const SLUG = 'bench500'

function percentile(sorted: number[], p: number): number {
  return sorted.length ? sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]! : NaN
}
const ms = (n: number) => `${n.toFixed(1).padStart(7)} ms`

if (!existsSync('.output/server/index.mjs')) throw new Error('no build in .output: run `nuxt build` first')
const pg = await startThrowawayPostgres({ database: 'blockbell_bench_editor' })
const db = await pg.openMigrated()
await seedDemoData(db)
const definition = benchLayout()
const row = await db.models.Layout.create({ slug: SLUG, name: definition.name, definition, version: 1, latestVersion: 1 })
await db.models.LayoutVersion.create({ layoutId: row.id, version: 1, definition, createdBy: null })
await db.sequelize.close()
const server = await startServer({
  BLOCKBELL_DB_HOST: pg.settings.host, BLOCKBELL_DB_PORT: String(pg.settings.port), BLOCKBELL_DB_NAME: pg.settings.database,
  BLOCKBELL_DB_USER: pg.settings.username, BLOCKBELL_DB_PASSWORD: pg.settings.password,
  MQTT_PORT: String(await freePort()), NUXT_SESSION_PASSWORD: 'bench-editor-session-password-32-chars-long',
})
const browser = await chromium.launch({
  executablePath: CHROMIUM, headless: true,
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
})
try {
  const http = new SessionClient(server.url)
  await http.signIn(DEMO.admin.email, DEMO.admin.password)
  const context = await browser.newContext({ viewport: { width: 1024, height: 768 }, baseURL: server.url })
  await context.addCookies(http.cookieHeader.split('; ').map((pair) => {
    const eq = pair.indexOf('=')
    return { name: pair.slice(0, eq), value: pair.slice(eq + 1), url: server.url }
  }))
  const page = await context.newPage()
  const cdp = await context.newCDPSession(page)
  await cdp.send('Emulation.setCPUThrottlingRate', { rate: THROTTLE })
  console.log(`Blockbell editor on ${definition.blocks.length} blocks, ${definition.signals.length} signals (chromium ${browser.version()}, headless, CPU ${THROTTLE}x slower, 1024x768)`)

  const opens: number[] = []
  const last = definition.blocks.at(-1)!.id
  const lastSignal = definition.signals.at(-1)!.id
  for (let i = 0; i < OPENS; i++) {
    await page.goto('/layouts')
    const t0 = Date.now()
    await page.goto(`/layouts/${SLUG}/edit`)
    await page.locator(`[data-test="block-${last}"]`).waitFor({ state: 'attached', timeout: 60_000 })
    await page.locator(`[data-test="berth-${last}"]`).waitFor({ state: 'attached', timeout: 60_000 })
    await page.locator(`[data-test="signal-${lastSignal}"]`).waitFor({ state: 'attached', timeout: 60_000 })
    await page.locator('[data-test="editor-errors"]').waitFor()
    opens.push(Date.now() - t0)
  }
  opens.sort((a, b) => a - b)
  console.log(`1. open the editor (navigation to every block, berth and signal drawn), ${OPENS} times: median ${ms(percentile(opens, 50))}, worst ${ms(opens.at(-1)!)}`)

  // select the first block, then drag it with the mouse (real input events through CDP)
  const target = definition.blocks[0]!.id
  const path = definition.diagram.blocks[target]!.path
  const mid = [(path[0]![0] + path[1]![0]) / 2, path[0]![1]] as const
  const toScreen = (x: number, y: number) => page.evaluate(([px, py]) => {
    const svg = document.querySelector('[data-test="editor-canvas"] svg')!
    const m = /translate\(([-\d.e]+) ([-\d.e]+)\) scale\(([-\d.e]+)\)/.exec(svg.querySelector('g[transform]')!.getAttribute('transform')!)!
    const r = svg.getBoundingClientRect()
    return { x: r.left + Number(m[1]) + px * Number(m[3]), y: r.top + Number(m[2]) + py * Number(m[3]), scale: Number(m[3]) }
  }, [x, y] as [number, number])
  const first = await toScreen(mid[0], mid[1])
  await page.mouse.click(first.x, first.y)
  await page.locator('[data-test="selection"]').first().waitFor({ state: 'attached' })
  // where the block is now: the press that starts the drag must land on it
  const start = await toScreen(mid[0], mid[1])
  if (Math.hypot(start.x - first.x, start.y - first.y) > 1) console.log(`   (the drawing moved ${Math.round(start.x - first.x)}, ${Math.round(start.y - first.y)} px when the block was selected)`)
  await page.evaluate((id) => {
    const w = window as unknown as { benchMoves: number[], benchDom: number[], benchFrame: number[] }
    w.benchMoves = []
    w.benchDom = []
    w.benchFrame = []
    // the block's track wherever it is drawn (the editor may draw the item being dragged in a layer of its
    // own): a redraw is the track drawn at a new place, whichever element shows it (no named functions in
    // here: tsx would wrap them in a helper the page does not have)
    const selector = `[data-test="block-${id}"] polyline.bb-track`
    let last = document.querySelector(selector)?.getAttribute('points') ?? ''
    window.addEventListener('pointermove', () => w.benchMoves.push(performance.now()), { capture: true })
    new MutationObserver(() => {
      // the time first: finding the track costs a few ms at 4x itself
      const at = performance.now()
      const now = document.querySelector(selector)?.getAttribute('points') ?? ''
      if (now === last) return
      last = now
      w.benchDom.push(at)
      requestAnimationFrame(() => w.benchFrame.push(performance.now()))
    }).observe(document.querySelector('[data-test="editor-canvas"] svg')!, { subtree: true, childList: true, attributes: true, attributeFilter: ['points'] })
  }, target)
  await page.mouse.move(start.x, start.y)
  await page.mouse.down()
  // one grid step (20 units) per move, so every move changes the drawing
  const step = 20 * start.scale
  for (let i = 1; i <= MOVES; i++) {
    const dx = ((i % 40) < 20 ? (i % 20) : 20 - (i % 20)) * step
    await page.mouse.move(start.x + dx + 1, start.y + (i % 2) * step)
    await page.waitForTimeout(30)
  }
  await page.mouse.up()
  await page.waitForTimeout(300)
  const timings = await page.evaluate(() => {
    const w = window as unknown as { benchMoves: number[], benchDom: number[], benchFrame: number[] }
    // pair each redraw with the last pointer move before it
    return w.benchDom.map((dom, i) => {
      const move = [...w.benchMoves].reverse().find(t => t <= dom) ?? dom
      return { dom: dom - move, frame: (w.benchFrame[i] ?? dom) - move }
    })
  })
  const dom = timings.map(t => t.dom).sort((a, b) => a - b)
  const frame = timings.map(t => t.frame).sort((a, b) => a - b)
  console.log(`2. drag of block ${target}: ${timings.length} redraws for ${MOVES} pointer moves`)
  console.log(`   pointer move -> track redrawn:      p50 ${ms(percentile(dom, 50))}, p95 ${ms(percentile(dom, 95))}, max ${ms(dom.at(-1) ?? NaN)}`)
  console.log(`   pointer move -> next frame starts:  p50 ${ms(percentile(frame, 50))}, p95 ${ms(percentile(frame, 95))}, max ${ms(frame.at(-1) ?? NaN)}`)
  console.log(`   one frame at 60 Hz is ${FRAME_MS.toFixed(1)} ms: redraw p95 ${percentile(dom, 95) <= FRAME_MS ? 'within' : 'OVER'} one frame`)
} finally {
  await browser.close()
  await server.stop()
  await pg.destroy()
}
