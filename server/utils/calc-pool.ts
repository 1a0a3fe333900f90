import { existsSync } from 'node:fs'
import { availableParallelism } from 'node:os'
import { dirname, join } from 'node:path'
import { Worker } from 'node:worker_threads'

export interface CalcRequest {
  id: number
  text: string
  deadlineMs: number
}

export type CalcReply =
  | { id: number; ok: true; result: unknown }
  | { id: number; ok: false; kind: 'input' | 'timeout' | 'busy' | 'engine'; field?: string; message: string }

interface Job {
  request: CalcRequest
  resolve: (reply: CalcReply) => void
}

interface Slot {
  worker: Worker
  job: Job | null
  timer: NodeJS.Timeout | null
}

/** How long one computation may take before its worker is stopped. */
export const calcTimeLimitMs = Number(process.env.NUXT_CALC_TIME_LIMIT_MS) || 10_000
/** Requests waiting beyond this many are answered "busy" rather than queued without end. */
const queueLimit = 64

function workerPath(): string {
  // nuxt.config.ts bundles it beside the built server's index.mjs, and into .nuxt/ for `nuxt dev`.
  const candidates = [
    process.env.LOOPWRIGHT_CALC_WORKER,
    join(dirname(process.argv[1] ?? ''), 'calc-worker.mjs'),
    join(process.cwd(), '.nuxt', 'calc-worker.mjs'),
  ].filter((path): path is string => Boolean(path))
  const found = candidates.find((path) => existsSync(path))
  if (!found) throw new Error(`calculation worker not found (looked in ${candidates.join(', ')})`)
  return found
}

/**
 * A fixed pool of worker threads with a time limit per computation. The engine
 * also stops itself at its deadline; the hard limit here (a little later)
 * catches anything that does not, by terminating the worker and starting a new one.
 */
class CalcPool {
  private slots: Slot[] = []
  private queue: Job[] = []
  private nextId = 1

  constructor(readonly size: number) {}

  run(text: string): Promise<CalcReply> {
    if (this.queue.length >= queueLimit) {
      return Promise.resolve({ id: 0, ok: false, kind: 'busy', message: 'The calculation service is busy; try again in a moment.' })
    }
    return new Promise((resolve) => {
      this.queue.push({ request: { id: this.nextId++, text, deadlineMs: calcTimeLimitMs }, resolve })
      this.dispatch()
    })
  }

  private dispatch() {
    if (this.slots.length === 0) this.slots = Array.from({ length: this.size }, () => this.spawn())
    for (const slot of this.slots) {
      if (slot.job || this.queue.length === 0) continue
      const job = this.queue.shift()!
      slot.job = job
      slot.timer = setTimeout(() => this.kill(slot), calcTimeLimitMs + 2_000)
      slot.worker.postMessage(job.request)
    }
  }

  private spawn(): Slot {
    const slot: Slot = { worker: new Worker(workerPath()), job: null, timer: null }
    slot.worker.unref()
    slot.worker.on('message', (reply: CalcReply) => this.finish(slot, reply))
    slot.worker.on('error', (error: Error) => this.replace(slot, `The calculation failed: ${error.message}`))
    return slot
  }

  private finish(slot: Slot, reply: CalcReply) {
    if (slot.timer) clearTimeout(slot.timer)
    const job = slot.job
    slot.job = null
    slot.timer = null
    job?.resolve(reply)
    this.dispatch()
  }

  private kill(slot: Slot) {
    this.replace(slot, `The computation did not finish within its time limit of ${calcTimeLimitMs / 1000} s and was stopped.`, 'timeout')
  }

  private replace(slot: Slot, message: string, kind: 'timeout' | 'engine' = 'engine') {
    const job = slot.job
    if (slot.timer) clearTimeout(slot.timer)
    void slot.worker.terminate()
    const index = this.slots.indexOf(slot)
    if (index >= 0) this.slots[index] = this.spawn()
    job?.resolve({ id: job.request.id, ok: false, kind, message })
    this.dispatch()
  }
}

let pool: CalcPool | null = null

function thePool(): CalcPool {
  pool ??= new CalcPool(Math.max(1, Math.min(4, availableParallelism())))
  return pool
}

/** Runs one loop file (as text) through the engine in the worker pool. */
export function calculateInPool(text: string): Promise<CalcReply> {
  return thePool().run(text)
}

/** Starts the workers and runs one small loop in each, so the first engineer's preview is not the slow one. */
export async function warmCalcPool(): Promise<void> {
  const loop = JSON.stringify({
    parameters: {},
    blocks: { G: { role: 'plant', label: 'warm-up', num: '1', den: 's + 1' } },
    structure: { feedback: { forward: 'G', return: null, sign: -1 } },
  })
  await Promise.all(Array.from({ length: thePool().size }, () => thePool().run(loop)))
}
