// The outbox worker and the job runner, in every app server (server/services/outbox-worker.ts, jobs.ts): woken
// by PostgreSQL notifications at the commit of a queued mail or job, polling otherwise, stopped on shutdown
// (Nitro's `close` hook: the message or job in hand finishes, claims not yet started are let go).
import { createOutboxWorker } from '../services/outbox-worker'
import { OUTBOX_CHANNEL } from '../services/outbox'
import { createJobRunner, JOBS_CHANNEL } from '../services/jobs'

/** A setting of runtimeConfig, or undefined when left at 0 (the service's own default). */
const setting = (value: unknown) => (Number(value) > 0 ? Number(value) : undefined)

export default defineNitroPlugin((nitroApp) => {
  const config = useRuntimeConfig()
  if (!config.databaseUrl) return
  const db = useDb()
  const report = (what: string) => (error: unknown) => console.error(`[${what}]`, error)
  const outboxWorker = createOutboxWorker({
    db,
    deliver: deliverOutboxMessage,
    retryBaseMs: setting(config.outbox.retryBaseMs),
    claimSeconds: setting(config.outbox.claimSeconds),
    maxAttempts: setting(config.outbox.maxAttempts),
    pollMs: setting(config.outbox.pollMs),
    onError: report('outbox'),
  })
  const jobRunner = createJobRunner({
    db,
    claimSeconds: setting(config.jobs.claimSeconds),
    retryBaseMs: setting(config.jobs.retryBaseMs),
    pollMs: setting(config.jobs.pollMs),
    onError: report('jobs'),
  })
  const listening = Promise.all([
    useSqlClient().listen(OUTBOX_CHANNEL, () => outboxWorker.wake()),
    useSqlClient().listen(JOBS_CHANNEL, () => jobRunner.wake()),
  ]).catch(report('background work: LISTEN'))
  outboxWorker.start()
  jobRunner.start()
  nitroApp.hooks.hook('close', async () => {
    await Promise.all([outboxWorker.stop(), jobRunner.stop()])
    const listeners = await listening
    await Promise.all((listeners ?? []).map((listener: { unlisten(): Promise<void> }) => listener.unlisten())).catch(() => {})
  })
})
