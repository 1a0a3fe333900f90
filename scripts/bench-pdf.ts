/**
 * The PDF renderer's figures (issue 9, "Fast, and measured"), run by `npm run bench` after the engine's timings.
 * The built app (.output, scripts/setup) on a database of its own (loopwright_bench, seeded with the demo data):
 *   - one demo sheet, PIC-214-01 (the booster discharge pressure, a draft: its download is rendered now by
 *     renderSheetPdf through Chromium), over HTTP as its engineer: two renders to warm the browser, then the
 *     median wall time of ten, request to last byte;
 *   - the peak resident memory of the app plus its Chromium while doing so: the app's process and all of its
 *     descendants, sampled from /proc every 25 ms. RSS summed over processes counts pages they share (libraries,
 *     Chromium's shared memory) once per process, so it is an upper bound; PSS (/proc/PID/smaps_rollup) divides
 *     shared pages among their sharers: the target is judged on PSS (MB of 10^6 bytes), RSS printed beside it.
 * Targets: a sheet in at most 0.5 s, the app with its browser under 600 MB. Exits 0 either way: it reports.
 */
import { peakMemoryVerdict, sampleTree } from './process-memory'
import { cpus, loadavg } from 'node:os'
import { instanceOf, start, stop } from '../tests/setup/app'
import { demoPassword } from './demo-people'

const RUNS = 10
const WARM_UPS = 2
const TARGET_S = 0.5
const TARGET_MB = 600
const engineer = 'tomas.okafor@example.com'

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b)
  const m = s.length >> 1
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2
}

async function main() {
  const running = await start(instanceOf('bench'))
  const base = `http://127.0.0.1:${running.instance.appPort}`
  const appPid = running.app.pid!
  // Peak memory, and CPU time by process (less moved by other work on the machine than the wall clock is).
  const sampler = sampleTree(appPid)
  try {
    const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: engineer, password: demoPassword }) })
    const cookie = login.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
    const get = async (path: string) => (await fetch(`${base}${path}`, { headers: { cookie } })).json() as Promise<any>
    const project = (await get('/api/projects?q=NWD-214')).items.find((p: any) => p.number === 'NWD-214')
    const listed = (await get(`/api/projects/${project.id}/sheets?q=PIC-214-01`)).items.find((s: any) => s.loopTag === 'PIC-214-01')
    if (!listed) throw new Error('the seeded booster sheet PIC-214-01 is missing')
    const sheet = await get(`/api/sheets/${listed.id}`)
    const revisionId = sheet.revision.id as number
    const status = sheet.revision.status as string

    const times: number[] = []
    // The render's own parts, from the preview's Server-Timing header (server/services/pdf-render.ts).
    const parts = new Map<string, number[]>()
    let pages = ''
    let cpuOfRuns: [string, number][] = []
    for (let i = 0; i < WARM_UPS + RUNS; i++) {
      if (i === WARM_UPS) {
        await new Promise((resolve) => setTimeout(resolve, 50))
        sampler.cpuSince()
      }
      const t0 = performance.now()
      const answer = await fetch(`${base}/api/revisions/${revisionId}/pdf`, { headers: { cookie } })
      const bytes = Buffer.from(await answer.arrayBuffer())
      const seconds = (performance.now() - t0) / 1000
      if (!answer.ok || bytes.subarray(0, 5).toString() !== '%PDF-') throw new Error(`render ${i + 1} answered ${answer.status}: ${bytes.subarray(0, 300).toString()}`)
      pages = `${bytes.length} bytes`
      if (i >= WARM_UPS) {
        times.push(seconds)
        for (const [, name, ms] of (answer.headers.get('server-timing') ?? '').matchAll(/([a-z]+);dur=([\d.]+)/g)) parts.set(name!, [...(parts.get(name!) ?? []), Number(ms)])
      }
    }
    await new Promise((resolve) => setTimeout(resolve, 100))
    cpuOfRuns = sampler.cpuSince()
    const s = median(times)
    const { peak } = sampler
    console.log(`\nPDF of one demo sheet (PIC-214-01, ${status}, ${pages}), GET /api/revisions/${revisionId}/pdf rendered by Chromium, warm browser:`)
    console.log(`  median of ${RUNS}: ${s.toFixed(3)} s (min ${Math.min(...times).toFixed(3)}, max ${Math.max(...times).toFixed(3)})  ${s <= TARGET_S ? 'PASS' : 'FAIL'} (at most ${TARGET_S} s)`)
    console.log(`  the render's parts, median ms (Server-Timing): ${[...parts].map(([name, ms]) => `${name} ${median(ms).toFixed(0)}`).join(', ')}`)
    console.log(
      `  peak memory of the app and its browser (${peak.processes} processes): ${peakMemoryVerdict(peak, TARGET_MB)}`,
    )
    console.log(`  at the peak, RSS by process (MiB): ${peak.byProcess}`)
    console.log(`  CPU ms per render, by process (mean of ${RUNS}): ${cpuOfRuns.map(([kind, seconds]) => `${kind} ${((seconds * 1000) / RUNS).toFixed(0)}`).join(', ')}`)
    console.log(`  machine: ${cpus().length} cores, load average ${loadavg().map((l) => l.toFixed(2)).join(' ')} (shared with other work; figures move with it)`)
  } finally {
    sampler.stop()
    await stop(running)
  }
}

main().catch((error) => {
  console.log(`\nPDF benchmark FAIL: it could not run: ${error instanceof Error ? error.message : String(error)}`)
})
