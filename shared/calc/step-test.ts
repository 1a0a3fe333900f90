import Papa from 'papaparse'

/**
 * A step-test record read from CSV: time, controller output (%) and process
 * value, one sample a row. Columns are recognised from a header row or chosen
 * by number; the sample time comes from the time column, or from the engineer
 * where the record has none. A row that cannot be read (a cell that is not a
 * number, a missing cell, a time that does not increase) refuses the whole
 * record, naming the row as the file counts it (1-based, header and comment
 * rows included), so nothing half-read is ever fitted.
 */

/** A record that cannot be read or fitted; `field` names the request field, `row` the file's row where one is at fault. */
export class StepTestError extends Error {
  readonly field: string
  readonly row: number | null
  constructor(field: string, message: string, row: number | null = null) {
    super(message)
    this.name = 'StepTestError'
    this.field = field
    this.row = row
  }
}

/** Column numbers, 1-based as a spreadsheet counts them; `time` null for a record without a time column. */
export interface StepColumns {
  time: number | null
  output: number
  process: number
}

export interface StepRecordOptions {
  /** Chosen columns; recognised from the header where not given. */
  columns?: StepColumns
  /** Seconds between samples, for a record without a time column (and only then). */
  sampleTime?: number
  /** The time column's unit where its header does not say (s by default). */
  timeUnit?: TimeUnit
}

export const timeUnits = { ms: 0.001, s: 1, min: 60, h: 3600 } as const
export type TimeUnit = keyof typeof timeUnits

export interface ColumnInfo {
  number: number
  /** The header's text, or null for a record without a header row. */
  header: string | null
  /** The unit read from the header, "flow (L/h)" → "L/h", or null. */
  unit: string | null
}

export interface StepRecord {
  /** Seconds from the first sample. */
  t: Float64Array
  output: Float64Array
  process: Float64Array
  /** The file's row of each sample (1-based). */
  rows: Int32Array
  columns: { time: ColumnInfo | null; output: ColumnInfo; process: ColumnInfo }
  /** Every header of the file in order (for choosing columns), empty without a header row. */
  headers: string[]
  /** Median spacing of the samples in s, as read or as given. */
  sampleTime: number
  /** Where the sample time came from. */
  sampleTimeFrom: 'time column' | 'given'
  /** The time column's unit as applied (s, min, ms, h). */
  timeUnit: TimeUnit | null
}

const TIME_HEADER = /^(t|time|times|elapsed|seconds?|sec|secs|timestamp)\b/i
const OUTPUT_HEADER = /\b(co|op|mv|out|output|controller output|valve|u|cv demand|demand|speed demand|pump speed)\b/i
const PROCESS_HEADER = /\b(pv|process|process value|measurement|measured|y|flow|level|pressure|temperature|value)\b/i

/** "Flow (L/h)" or "Flow [L/h]" → "L/h". */
export function headerUnit(header: string): string | null {
  const match = /[([]\s*([^)\]]+?)\s*[)\]]\s*$/.exec(header)
  return match ? match[1]! : null
}

function headerName(header: string): string {
  return header.replace(/[([][^)\]]*[)\]]\s*$/, '').trim()
}

function timeUnitOf(unit: string | null): TimeUnit | null {
  if (unit === null) return null
  const u = unit.toLowerCase()
  if (u === 's' || u === 'sec' || u === 'secs' || u === 'second' || u === 'seconds') return 's'
  if (u === 'ms') return 'ms'
  if (u === 'min' || u === 'mins' || u === 'minute' || u === 'minutes') return 'min'
  if (u === 'h' || u === 'hr' || u === 'hour' || u === 'hours') return 'h'
  return null
}

/** A cell as a number, or null where it is not one (empty, text, NaN, ±Infinity). */
function cellNumber(cell: string | undefined): number | null {
  if (cell === undefined) return null
  const text = cell.trim()
  if (text === '') return null
  const value = Number(text)
  return Number.isFinite(value) ? value : null
}

const isBlank = (row: string[]) => row.every((cell) => cell.trim() === '')
const isComment = (row: string[]) => (row[0] ?? '').trimStart().startsWith('#')

/** The columns named by a header row: time, output and process value, each the first header that matches. */
export function recogniseColumns(headers: readonly string[]): StepColumns | null {
  const names = headers.map(headerName)
  const find = (pattern: RegExp, taken: number[]) => names.findIndex((n, i) => !taken.includes(i) && pattern.test(n))
  const time = find(TIME_HEADER, [])
  const output = find(OUTPUT_HEADER, [time])
  const process = find(PROCESS_HEADER, [time, output])
  if (output < 0 || process < 0) return null
  return { time: time < 0 ? null : time + 1, output: output + 1, process: process + 1 }
}

/** The header row's cells (the first row that is no comment and holds a cell that is no number), or none. */
export function recordHeaders(text: string): string[] {
  const parsed = Papa.parse<string[]>(text, { preview: 20, delimiter: '' })
  const first = parsed.data.find((row) => !isBlank(row) && !isComment(row))
  return first && first.some((cell) => cellNumber(cell) === null) ? first.map((cell) => cell.trim()) : []
}

/** Reads the CSV text of a step test. Throws StepTestError naming the field (and the row) at fault. */
export function readStepRecord(text: string, options: StepRecordOptions = {}): StepRecord {
  const parsed = Papa.parse<string[]>(text, { skipEmptyLines: false, delimiter: '' })
  const table = parsed.data
  // File rows are 1-based; papaparse gives one array per line (no quoted line breaks in numeric records).
  let first = 0
  while (first < table.length && (isBlank(table[first]!) || isComment(table[first]!))) first++
  if (first >= table.length) throw new StepTestError('file', 'the file holds no rows of data')
  const firstRow = table[first]!
  const hasHeader = firstRow.some((cell) => cellNumber(cell) === null)
  const headers = hasHeader ? firstRow.map((cell) => cell.trim()) : []
  const width = firstRow.length

  let columns = options.columns
  if (!columns) {
    if (hasHeader) {
      const recognised = recogniseColumns(headers)
      if (!recognised) throw new StepTestError('columns', `the headers (${headers.join(', ')}) do not name the controller output and the process value: choose the columns`)
      columns = recognised
    } else if (width === 3) columns = { time: 1, output: 2, process: 3 }
    else if (width === 2) columns = { time: null, output: 1, process: 2 }
    else throw new StepTestError('columns', `the file has ${width} columns and no header row: choose the columns`)
  }
  for (const [name, number] of Object.entries(columns) as Array<[keyof StepColumns, number | null]>) {
    if (number === null) continue
    if (!Number.isInteger(number) || number < 1 || number > width)
      throw new StepTestError(`columns.${name}`, `column ${number} does not exist: the file has ${width} column${width === 1 ? '' : 's'}`)
  }
  const chosen = [columns.time, columns.output, columns.process].filter((c) => c !== null)
  if (new Set(chosen).size !== chosen.length) throw new StepTestError('columns', 'time, controller output and process value must be three different columns')

  const info = (number: number): ColumnInfo => ({ number, header: hasHeader ? headers[number - 1]! : null, unit: hasHeader ? headerUnit(headers[number - 1]!) : null })
  const timeInfo = columns.time === null ? null : info(columns.time)
  let timeUnit: TimeUnit | null = null
  let timeScale = 1
  if (timeInfo) {
    timeUnit = timeUnitOf(timeInfo.unit) ?? options.timeUnit ?? 's'
    timeScale = timeUnits[timeUnit]
  } else if (options.sampleTime === undefined) {
    throw new StepTestError('sampleTime', 'the record has no time column: give the sample time in seconds')
  } else if (!(options.sampleTime > 0) || !Number.isFinite(options.sampleTime)) {
    throw new StepTestError('sampleTime', 'the sample time must be a positive number of seconds')
  }

  const n = table.length - first - (hasHeader ? 1 : 0)
  const t = new Float64Array(n)
  const output = new Float64Array(n)
  const process = new Float64Array(n)
  const rows = new Int32Array(n)
  const ti = columns.time === null ? -1 : columns.time - 1
  const oi = columns.output - 1
  const pi = columns.process - 1
  let count = 0
  const label = (number: number) => (hasHeader ? `"${headers[number - 1]}"` : `column ${number}`)
  for (let r = first + (hasHeader ? 1 : 0); r < table.length; r++) {
    const row = table[r]!
    if (isBlank(row) || isComment(row)) continue
    const rowNumber = r + 1
    const read = (index: number): number => {
      const value = cellNumber(row[index])
      if (value === null) {
        const cell = row[index]
        const why = cell === undefined || cell.trim() === '' ? 'is missing' : `is not a number ("${cell.trim().slice(0, 40)}")`
        throw new StepTestError('file', `row ${rowNumber}: ${label(index + 1)} ${why}`, rowNumber)
      }
      return value
    }
    const time = ti < 0 ? count * options.sampleTime! : read(ti) * timeScale
    if (count > 0 && !(time > t[count - 1]!)) throw new StepTestError('file', `row ${rowNumber}: the time does not increase (${formatTime(time)} after ${formatTime(t[count - 1]!)})`, rowNumber)
    t[count] = time
    output[count] = read(oi)
    process[count] = read(pi)
    rows[count] = rowNumber
    count++
  }
  if (count < 10) throw new StepTestError('file', `the record has ${count} sample${count === 1 ? '' : 's'}; a step test needs at least 10`)
  const t0 = t[0]!
  const times = t.subarray(0, count)
  for (let i = 0; i < count; i++) times[i] = times[i]! - t0
  return {
    t: times,
    output: output.subarray(0, count),
    process: process.subarray(0, count),
    rows: rows.subarray(0, count),
    columns: { time: timeInfo, output: info(columns.output), process: info(columns.process) },
    headers,
    sampleTime: ti < 0 ? options.sampleTime! : medianSpacing(times),
    sampleTimeFrom: ti < 0 ? 'given' : 'time column',
    timeUnit,
  }
}

function formatTime(seconds: number): string {
  return `${Number(seconds.toPrecision(6))} s`
}

/** Median of the spacing between samples (a few late samples do not move it). */
function medianSpacing(t: Float64Array): number {
  const gaps = new Float64Array(t.length - 1)
  for (let i = 1; i < t.length; i++) gaps[i - 1] = t[i]! - t[i - 1]!
  gaps.sort()
  return gaps[Math.floor(gaps.length / 2)]!
}
