import type { JobView } from '#shared/schemas/jobs'

/** How often a job's progress is read again (GET /api/jobs/[id]). */
const POLL_MS = 500

/**
 * Follows a background job (an issue's render) to its end by polling GET /api/jobs/[id]: `job` as last read (for a
 * progress bar: `percent`, and `progress.what`), and `follow(jobId)`, which answers the job once it is done or failed.
 * Polling stops when the component goes away; `follow` then answers the job as last read.
 */
export function useJobProgress() {
  const job = ref<JobView | null>(null)
  const percent = computed(() => {
    const seen = job.value
    if (seen?.status === 'done') return 100
    const progress = seen?.progress
    return progress && progress.total > 0 ? Math.round((100 * progress.done) / progress.total) : 0
  })
  let gone = false
  onScopeDispose(() => {
    gone = true
  })

  async function follow(jobId: number): Promise<JobView> {
    for (;;) {
      const seen = await $fetch<JobView>(`/api/jobs/${jobId}`)
      job.value = seen
      if (seen.status === 'done' || seen.status === 'failed' || gone) return seen
      await new Promise((resolve) => setTimeout(resolve, POLL_MS))
    }
  }

  return { job, percent, follow, forget: () => (job.value = null) }
}
