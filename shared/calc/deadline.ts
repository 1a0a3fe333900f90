import { CalcTimeoutError, Deadline } from './errors'

/**
 * How the numerics are told when to stop: `deadline` a Date.now() timestamp in
 * ms (or the algebra's Deadline object); `limitMs`, when given, is the whole
 * time limit the message quotes (otherwise the time left when the call began).
 */
export interface DeadlineOption {
  deadline?: number | Deadline
  limitMs?: number
}

/** Throws CalcTimeoutError once the deadline has passed; `started` is Date.now() at the call's start. */
export function checkDeadline(options: DeadlineOption | undefined, stage: string, started: number): void {
  const deadline = options?.deadline
  if (deadline === undefined) return
  if (deadline instanceof Deadline) {
    deadline.check(stage)
    return
  }
  if (Date.now() > deadline) throw new CalcTimeoutError(stage, options?.limitMs ?? Math.max(0, deadline - started))
}
