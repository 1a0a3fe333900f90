// Step tests and tuning (issue 10, items 2 and 3): the bodies of POST /api/attachments/[id]/step-fit and
// POST /api/tuning, and what they answer. The step-test and tuning panels validate with the same schemas.
import { z } from 'zod'
import type { FopdtFit, StepFitPlot, StepLocation } from '../calc/step-fit'
import type { ColumnInfo, TimeUnit } from '../calc/step-test'
import { type TuningResult, tuningRules } from '../calc/tuning'

/** The most columns a record may have to choose from. */
const MAX_COLUMN = 200

const columnNumber = (what: string) =>
  z
    .number({ required_error: `Choose the ${what} column`, invalid_type_error: `Choose the ${what} column` })
    .int('A column is a whole number')
    .min(1, 'Columns count from 1')
    .max(MAX_COLUMN, `At most ${MAX_COLUMN} columns`)

const seconds = (what: string) =>
  z.number({ invalid_type_error: `The ${what} is a number of seconds` }).finite(`The ${what} is a number of seconds`)

export const stepFitBodySchema = z
  .object({
    /** Column numbers, 1-based; time null for a record without a time column. Recognised from the header when left out. */
    columns: z
      .object({ time: columnNumber('time').nullable(), output: columnNumber('controller output'), process: columnNumber('process value') })
      .strict()
      .optional(),
    /** Seconds between samples, for a record without a time column. */
    sampleTime: seconds('sample time').positive('The sample time is more than zero').max(86_400, 'At most a day between samples').optional(),
    /** The time column's unit where its header does not say. */
    timeUnit: z.enum(['ms', 's', 'min', 'h']).optional(),
    /** The step, s from the record's start; found (the largest change of the output) when left out. */
    stepTime: seconds('step time').min(0, 'The step time is zero or more').max(1e9, 'The step time is too large').optional(),
  })
  .strict()
export type StepFitBody = z.infer<typeof stepFitBodySchema>

export interface StepFitAnswer {
  attachment: { id: number; name: string; size: number; sha256: string }
  record: {
    samples: number
    headers: string[]
    columns: { time: ColumnInfo | null; output: ColumnInfo; process: ColumnInfo }
    sampleTime: number
    sampleTimeFrom: 'time column' | 'given'
    timeUnit: TimeUnit | null
    /** Seconds from the first sample to the last. */
    duration: number
  }
  step: StepLocation
  baseline: number
  final: number
  twoPoint: FopdtFit & { t28: number; t63: number }
  leastSquares: FopdtFit & { iterations: number }
  plot: StepFitPlot
  warnings: string[]
}

/** A refused record: `field` (file, columns, sampleTime, stepTime…), the file's row where one is at fault, its headers to choose from. */
export interface StepFitRefusal {
  field: string
  row: number | null
  message: string
  headers: string[]
}

const positiveSeconds = (what: string) => seconds(what).positive(`The ${what} is more than zero`).max(1e7, `The ${what} is too large`)

export const fopdtModelSchema = z
  .object({
    gain: z
      .number({ required_error: 'Enter the plant gain', invalid_type_error: 'The plant gain is a number' })
      .finite('The plant gain is a number')
      .refine((k) => k !== 0, 'The plant gain is not zero')
      .refine((k) => Math.abs(k) <= 1e9 && Math.abs(k) >= 1e-9, 'The plant gain is out of range (1e-9 to 1e9 in magnitude)'),
    timeConstant: positiveSeconds('time constant'),
    deadTime: seconds('dead time').min(0, 'The dead time is zero or more').max(1e7, 'The dead time is too large'),
  })
  .strict()

export const tuningBodySchema = z
  .object({
    rule: z.enum(tuningRules, { errorMap: () => ({ message: `Choose a rule: ${tuningRules.join(', ')}` }) }),
    model: fopdtModelSchema,
    /** τc of SIMC (θ when left out) or λ of lambda tuning (required there), s. */
    closedLoopTimeConstant: positiveSeconds('closed-loop time constant').optional(),
  })
  .strict()
export type TuningBody = z.infer<typeof tuningBodySchema>
export type TuningAnswer = TuningResult
