// The handler of package issues (server/services/lifecycle.ts, runPackageIssue): the runner of
// server/plugins/background-work.ts claims these jobs in whichever app server is free.
import { registerJobHandler, unregisterJobHandler } from '../services/jobs'
import { PACKAGE_ISSUE_JOB, runPackageIssue, type PackageIssueJob } from '../services/lifecycle'

export default defineNitroPlugin(() => {
  // Forgotten first, so a reloaded plugin (development) registers afresh.
  unregisterJobHandler(PACKAGE_ISSUE_JOB)
  registerJobHandler(PACKAGE_ISSUE_JOB, (payload, run) => runPackageIssue(useDb(), payload as PackageIssueJob, run, renderer()))
})
