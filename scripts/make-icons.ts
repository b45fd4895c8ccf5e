// Draws Blockbell's icons and writes them, with the web app manifest, into public/:
//   ./node_modules/.bin/tsx scripts/make-icons.ts
// The mark is the bell over a length of track (components/app/AppLogo.vue), in the palette of
// tailwind.config.ts; sharp rasterises the SVG to the sizes browsers and home screens ask for.
import { writeFileSync } from 'node:fs'
import sharp from 'sharp'
import { palette, themes } from '../tailwind.config'

const OUT = 'public'
const BELL = 'M16 4c-5 0-8 4-8 9v6l-3 3h22l-3-3v-6c0-5-3-9-8-9Z'

/** The mark on a rounded square (`inset` 0) or, for maskable icons, inside the central safe zone. */
function iconSvg(size: number, maskable = false): string {
  const scale = maskable ? 0.62 : 0.8
  const offset = (32 - 32 * scale) / 2
  const radius = maskable ? 0 : 6
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${size}" height="${size}" viewBox="0 0 32 32">
  <rect width="32" height="32" rx="${radius}" fill="${palette.night[900]}"/>
  <g transform="translate(${offset} ${offset}) scale(${scale})" fill="${palette.brass[400]}">
    <path d="${BELL}"/>
    <circle cx="16" cy="25" r="2.5"/>
    <path d="M3 29h26" stroke="${palette.brass[400]}" stroke-width="2" stroke-linecap="round" fill="none"/>
  </g>
</svg>
`
}

async function png(size: number, maskable = false): Promise<Buffer> {
  return sharp(Buffer.from(iconSvg(size, maskable)), { density: 72 * size / 32 }).resize(size, size).png().toBuffer()
}

/** An ICO file holding PNG images (the format allows PNG entries). */
function ico(images: { size: number, data: Buffer }[]): Buffer {
  const header = Buffer.alloc(6)
  header.writeUInt16LE(0, 0)
  header.writeUInt16LE(1, 2)
  header.writeUInt16LE(images.length, 4)
  let offset = 6 + 16 * images.length
  const entries = images.map(({ size, data }) => {
    const e = Buffer.alloc(16)
    e.writeUInt8(size >= 256 ? 0 : size, 0)
    e.writeUInt8(size >= 256 ? 0 : size, 1)
    e.writeUInt16LE(1, 4)
    e.writeUInt16LE(32, 6)
    e.writeUInt32LE(data.length, 8)
    e.writeUInt32LE(offset, 12)
    offset += data.length
    return e
  })
  return Buffer.concat([header, ...entries, ...images.map(i => i.data)])
}

writeFileSync(`${OUT}/icon.svg`, iconSvg(32))
for (const size of [192, 512]) writeFileSync(`${OUT}/icon-${size}.png`, await png(size))
writeFileSync(`${OUT}/icon-maskable-512.png`, await png(512, true))
writeFileSync(`${OUT}/apple-touch-icon.png`, await png(180))
writeFileSync(`${OUT}/favicon.ico`, ico([{ size: 16, data: await png(16) }, { size: 32, data: await png(32) }]))

const manifest = {
  name: 'Blockbell',
  short_name: 'Blockbell',
  description: 'Live control panel for model railway layouts',
  start_url: '/panel',
  scope: '/',
  display: 'standalone',
  orientation: 'any',
  theme_color: themes.dark.surface,
  background_color: themes.dark.bg,
  icons: [
    { src: '/icon-192.png', sizes: '192x192', type: 'image/png' },
    { src: '/icon-512.png', sizes: '512x512', type: 'image/png' },
    { src: '/icon-maskable-512.png', sizes: '512x512', type: 'image/png', purpose: 'maskable' },
    { src: '/icon.svg', sizes: 'any', type: 'image/svg+xml' },
  ],
}
writeFileSync(`${OUT}/manifest.webmanifest`, `${JSON.stringify(manifest, null, 2)}\n`)
console.log(`icons and manifest written to ${OUT}/`)
