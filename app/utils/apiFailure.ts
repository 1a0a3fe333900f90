/**
 * What a refused or failed API call means for the person on screen. The server
 * answers 400 with `data.issues`, zod's flattened field errors (DEVELOPERS.md),
 * which forms show next to their fields.
 */
export interface ApiFailure {
  status: number | null
  message: string
  fieldErrors: Record<string, string>
}

interface FetchErrorLike {
  statusCode?: number
  status?: number
  statusMessage?: string
  data?: {
    message?: string
    statusMessage?: string
    issues?: { formErrors?: string[]; fieldErrors?: Record<string, string[] | undefined> }
    data?: { issues?: { formErrors?: string[]; fieldErrors?: Record<string, string[] | undefined> } }
  }
}

const plainWords: Record<number, string> = {
  401: 'Your session has ended. Sign in again to go on.',
  403: 'Your roles do not allow this. The refusal has been recorded in the audit trail.',
  404: 'This was not found. It may have been removed, or the address is wrong.',
  409: 'This clashes with what is already stored.',
  410: 'This link has expired.',
  429: 'Too many attempts. Wait a while and try again.',
}

export function readApiFailure(error: unknown): ApiFailure {
  const failure = (error ?? {}) as FetchErrorLike
  const status = failure.statusCode ?? failure.status ?? null
  const body = failure.data
  const issues = body?.data?.issues ?? body?.issues
  const fieldErrors: Record<string, string> = {}
  for (const [field, messages] of Object.entries(issues?.fieldErrors ?? {})) {
    if (messages && messages.length) fieldErrors[field] = messages[0]!
  }
  const serverWords = body?.message ?? body?.statusMessage ?? failure.statusMessage
  const formError = issues?.formErrors?.[0]
  let message: string
  if (status === 400) message = formError ?? 'Some fields need attention.'
  else if (status === 409 && serverWords) message = serverWords
  else if (status && plainWords[status]) message = plainWords[status]
  else message = 'The server could not do this. Try again, or tell an administrator.'
  return { status, message, fieldErrors }
}
