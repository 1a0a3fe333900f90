/**
 * Print data handed to a warm render tab with its next page, by render token (server/services/pdf-render.ts,
 * `printAppPage`): the print view takes it from here instead of fetching it from the print data route. Only the
 * render in hand is kept.
 */
const handed = new Map<string, unknown>()

/** Keeps `data` for the print view of render token `token`, in place of any earlier render's. */
export function handPrintData(token: string, data: unknown) {
  handed.clear()
  handed.set(token, data)
}

/** The print data handed over for `token`, if any. */
export function handedPrintData<T>(token: string): T | undefined {
  return handed.get(token) as T | undefined
}
