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
  | { id: number; ok: false; kind: 'input' | 'timeout' | 'busy' | 'engine' | 'cancelled'; field?: string; message: string }

interface Job {
  request: CalcRequest
  owner: string
  resolve: (reply: CalcReply) => void
}

interface Slot {
  worker: Worker
  job: Job | null
  timer: NodeJS.Timeout | null
  /** While the worker waits for work, beyond the pool's first: when it is let go. */
  idle: NodeJS.Timeout | null
}

/** How long one computation may take before its worker is stopped. */
export const calcTimeLimitMs = Number(process.env.NUXT_CALC_TIME_LIMIT_MS) || 10_000
/** Requests waiting beyond this many, everyone's together, are answered "busy" rather than queued without end. */
const queueLimit = 64
/**
 * A worker beyond the first that has had no work for this long is let go. Each worker holds the engine (about 60 MiB
 * PSS after the example loops, measured by starting workers of the built calc-worker.mjs); one is always kept, warm, and
 * the others start when work waits for them (about 0.4 s to start one and compute a small loop) and go when idle.
 */
const idleWorkerMs = Number(process.env.LOOPWRIGHT_CALC_IDLE_MS) || 60_000

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
 * A pool of up to `size` worker threads with a time limit per computation: one kept, the others started when work
 * waits and let go after `idleWorkerMs` without any. The engine
 * also stops itself at its deadline; the hard limit here (a little later)
 * catches anything that does not, by terminating the worker and starting a new one.
 *
 * Fairness: each person (the `owner` of a job) has a queue of their own, and free
 * workers serve the queues in turn (round robin), so one person's queued work
 * never stands in front of another's. One person holds at most `size − 1` workers
 * (one on a pool of one), so a worker is always left for somebody else: someone
 * who floods the pool with heavy loops waits for their own work, and the next
 * person's small calculation starts as soon as it arrives.
 */
class CalcPool {
  private slots: Slot[] = []
  /** Queues by owner; a Map keeps insertion order, which is the round robin's order. */
  private queues = new Map<string, Job[]>()
  private queued = 0
  private nextId = 1
  readonly perOwner: number

  constructor(readonly size: number) {
    this.perOwner = Math.max(1, size - 1)
  }

  run(text: string, owner: string, signal?: AbortSignal): Promise<CalcReply> {
    if (this.queued >= queueLimit) {
      return Promise.resolve({ id: 0, ok: false, kind: 'busy', message: 'The calculation service is busy; try again in a moment.' })
    }
    return new Promise((resolve) => {
      const job: Job = { request: { id: this.nextId++, text, deadlineMs: calcTimeLimitMs }, owner, resolve }
      const queue = this.queues.get(owner) ?? []
      queue.push(job)
      this.queues.set(owner, queue)
      this.queued++
      // A request given up by its sender (the workbench aborts the previous one as the engineer types)
      // leaves the queue at once; one already running finishes, as a worker cannot be interrupted cheaply.
      signal?.addEventListener('abort', () => this.cancel(job), { once: true })
      this.dispatch()
    })
  }

  get workers(): number {
    return this.slots.length
  }

  /** Jobs running and waiting for one owner. */
  inFlight(owner: string): number {
    return this.slots.filter((slot) => slot.job?.owner === owner).length + (this.queues.get(owner)?.length ?? 0)
  }

  private cancel(job: Job) {
    const queue = this.queues.get(job.owner)
    const index = queue?.indexOf(job) ?? -1
    if (!queue || index < 0) return
    queue.splice(index, 1)
    this.queued--
    if (queue.length === 0) this.queues.delete(job.owner)
    job.resolve({ id: job.request.id, ok: false, kind: 'cancelled', message: 'The request was withdrawn before it started.' })
  }

  /** The next job to start: the first owner in turn with work waiting and a worker to spare. */
  private next(): Job | null {
    for (const [owner, queue] of this.queues) {
      if (this.running(owner) >= this.perOwner) continue
      const job = queue.shift()!
      this.queued--
      // Served: the owner goes to the back of the turn (or leaves it when nothing more waits).
      this.queues.delete(owner)
      if (queue.length > 0) this.queues.set(owner, queue)
      return job
    }
    return null
  }

  private running(owner: string): number {
    return this.slots.filter((slot) => slot.job?.owner === owner).length
  }

  private dispatch() {
    for (;;) {
      const free = this.slots.find((candidate) => !candidate.job)
      if (!free && this.slots.length >= this.size) break
      const job = this.next()
      if (!job) break
      const slot = free ?? this.added()
      if (slot.idle) clearTimeout(slot.idle)
      slot.idle = null
      slot.job = job
      slot.timer = setTimeout(() => this.kill(slot), calcTimeLimitMs + 2_000)
      slot.worker.postMessage(job.request)
    }
    this.retireLater()
  }

  /** A new worker in the pool (fewer than `size` are running). */
  private added(): Slot {
    const slot = this.spawn()
    this.slots.push(slot)
    return slot
  }

  /** Each idle worker but the first goes after `idleWorkerMs` unless work comes first. */
  private retireLater() {
    for (const slot of this.slots.slice(1)) {
      if (slot.job || slot.idle) continue
      slot.idle = setTimeout(() => {
        slot.idle = null
        const index = this.slots.indexOf(slot)
        if (slot.job || index < 1) return
        this.slots.splice(index, 1)
        void slot.worker.terminate()
      }, idleWorkerMs)
      slot.idle.unref()
    }
  }

  private spawn(): Slot {
    const slot: Slot = { worker: new Worker(workerPath()), job: null, timer: null, idle: null }
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
    if (slot.idle) clearTimeout(slot.idle)
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

/** Runs one loop file (as text) through the engine in the worker pool, queued as `owner`'s work. */
export function calculateInPool(text: string, owner: string, signal?: AbortSignal): Promise<CalcReply> {
  return thePool().run(text, owner, signal)
}

/** How many workers the pool holds now (for its tests). */
export function calcWorkers(): number {
  return thePool().workers
}

/** How many of `owner`'s calculations are running or waiting. */
export function calculationsInFlight(owner: string): number {
  return thePool().inFlight(owner)
}

/** Starts the pool's first worker and runs one small loop in it, so the first engineer's preview is not the slow one. */
export async function warmCalcPool(): Promise<void> {
  const loop = JSON.stringify({
    parameters: {},
    blocks: { G: { role: 'plant', label: 'warm-up', num: '1', den: 's + 1' } },
    structure: { feedback: { forward: 'G', return: null, sign: -1 } },
  })
  await thePool().run(loop, 'warm-up')
}
