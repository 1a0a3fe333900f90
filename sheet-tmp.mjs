import puppeteer from 'puppeteer-core'
import { readdirSync, writeFileSync } from 'node:fs'
const dir = process.argv[2], per = Number(process.argv[3] ?? 3), prefix = process.argv[4] ?? 'p-'
const files = readdirSync(dir).filter((f) => f.startsWith(prefix) && f.endsWith('.png')).sort()
const browser = await puppeteer.launch({ executablePath: '/usr/bin/chromium', headless: true, args: ['--no-sandbox'] })
const page = await browser.newPage()
for (let i = 0; i < files.length; i += per) {
  const group = files.slice(i, i + per)
  await page.setViewport({ width: 600 * per, height: 850 })
  writeFileSync(`${dir}/grid.html`, `<body style="margin:0;display:flex;gap:4px;background:#888">${group.map((f) => `<img src="file://${dir}/${f}" style="width:${600 - 4}px;border:1px solid #000">`).join('')}</body>`); await page.goto(`file://${dir}/grid.html`, { waitUntil: 'load' })
  await page.screenshot({ path: `${dir}/sheet-${String(i / per + 1).padStart(2, '0')}.png`, fullPage: true })
}
await browser.close()
