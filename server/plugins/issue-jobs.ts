// The handlers of issues (server/services/lifecycle.ts: runPackageIssue, runSheetIssue): the runner of
// server/plugins/background-work.ts claims these jobs in whichever app server is free.
import { registerJobHandler, unregisterJobHandler } from '../services/jobs'
import { PACKAGE_ISSUE_JOB, runPackageIssue, runSheetIssue, SHEET_ISSUE_JOB, type PackageIssueJob, type SheetIssueJob } from '../services/lifecycle'

export default defineNitroPlugin(() => {
  // Forgotten first, so a reloaded plugin (development) registers afresh.
  unregisterJobHandler(PACKAGE_ISSUE_JOB)
  unregisterJobHandler(SHEET_ISSUE_JOB)
  registerJobHandler(PACKAGE_ISSUE_JOB, (payload, run) => runPackageIssue(useDb(), payload as PackageIssueJob, run, renderer()))
  registerJobHandler(SHEET_ISSUE_JOB, (payload, run) => runSheetIssue(useDb(), payload as SheetIssueJob, run, renderer()))
})
