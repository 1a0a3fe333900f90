import { readJob } from '../../services/jobs'

export default defineEventHandler(async (event) => {
  const person = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const job = await readJob(useDb(), Number(id), person.id)
  if ('refused' in job) return refuse(event, 403, job.refused, { jobId: Number(id) })
  return job
})
