// One formatter for dates and times on every screen: day month year, 24-hour clock.
const dateFormat = new Intl.DateTimeFormat('en-GB', { day: 'numeric', month: 'short', year: 'numeric' })
const dateTimeOptions: Intl.DateTimeFormatOptions = {
  day: 'numeric',
  month: 'short',
  year: 'numeric',
  hour: '2-digit',
  minute: '2-digit',
  second: '2-digit',
  hour12: false,
}
const dateTimeFormat = new Intl.DateTimeFormat('en-GB', dateTimeOptions)

export function formatDate(iso: string | null | undefined) {
  if (!iso) return '—'
  const at = new Date(iso)
  return Number.isNaN(at.getTime()) ? String(iso) : dateFormat.format(at)
}

export function formatDateTime(iso: string | null | undefined) {
  if (!iso) return '—'
  const at = new Date(iso)
  return Number.isNaN(at.getTime()) ? String(iso) : dateTimeFormat.format(at)
}

// A signature's or an issue's time is stated in UTC wherever it is shown (issue 8: "UTC time"), whatever the
// reader's own time zone: the same instant then reads the same on every screen and in the PDF.
const utcDateTimeFormat = new Intl.DateTimeFormat('en-GB', { ...dateTimeOptions, timeZone: 'UTC' })

/** The instant in UTC, followed by "UTC". */
export function formatDateTimeUtc(iso: string | null | undefined) {
  if (!iso) return '—'
  const at = new Date(iso)
  return Number.isNaN(at.getTime()) ? String(iso) : `${utcDateTimeFormat.format(at)} UTC`
}
