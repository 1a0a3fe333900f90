// GET /api/jobs/[id]: a background job as its owner sees it (a progress bar while it runs).
export type JobStatus = 'waiting' | 'running' | 'done' | 'failed'

export interface JobView {
  id: number
  kind: string
  status: JobStatus
  /** `{ done, total, what }` as the handler last wrote it; null before its first report. */
  progress: { done: number; total: number; what?: string } | null
  /** The handler's answer, once done. */
  result: unknown
  /** The last attempt's error (a job waiting for its retry shows why the last one failed). */
  error: string | null
  attempts: number
  maxAttempts: number
  createdAt: string
  finishedAt: string | null
}
