/**
 * The two ways the engine refuses to give a result. Both carry a message meant
 * for the engineer as it stands, so the command line and the API can print it
 * without a stack trace.
 */

/** A loop file that cannot be computed; `field` names where, as `blocks.P.den` or `parameters.Kc.min`. */
export class LoopInputError extends Error {
  readonly field: string
  /** The reason alone, without the field in front. */
  readonly reason: string

  constructor(field: string, reason: string) {
    super(`${field}: ${reason}`)
    this.name = 'LoopInputError'
    this.field = field
    this.reason = reason
  }
}

/** A computation that could not finish within its time limit; `stage` says which part was running. */
export class CalcTimeoutError extends Error {
  readonly stage: string
  readonly limitMs: number

  constructor(stage: string, limitMs: number) {
    super(`the calculation did not finish within its time limit of ${formatSeconds(limitMs)} (stopped during ${stage})`)
    this.name = 'CalcTimeoutError'
    this.stage = stage
    this.limitMs = limitMs
  }
}

function formatSeconds(ms: number): string {
  const seconds = ms / 1000
  return `${Number.isInteger(seconds) ? seconds : seconds.toFixed(3).replace(/0+$/, '')} s`
}

/**
 * A point in time (Date.now() ms) after which long work stops. `check` is cheap
 * enough to call inside inner loops every few thousand operations.
 */
export class Deadline {
  readonly at: number
  readonly limitMs: number

  constructor(limitMs: number) {
    this.limitMs = limitMs
    this.at = Date.now() + limitMs
  }

  check(stage: string): void {
    if (Date.now() > this.at) throw new CalcTimeoutError(stage, this.limitMs)
  }
}
