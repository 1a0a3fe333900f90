/**
 * The calculation worker: runs the engine off the server's event loop, so a
 * heavy loop file delays nobody else's request. Bundled on its own by the
 * Nitro hook in nuxt.config.ts (a worker needs a file of its own at run time).
 */
import { parentPort } from 'node:worker_threads'
import { evaluateLoopText } from '../../shared/calc/index'
import { CalcTimeoutError, LoopInputError } from '../../shared/calc/errors'
import type { CalcReply, CalcRequest } from '../utils/calc-pool'

parentPort?.on('message', (request: CalcRequest) => {
  let reply: CalcReply
  try {
    reply = { id: request.id, ok: true, result: evaluateLoopText(request.text, { deadlineMs: request.deadlineMs }) }
  } catch (error) {
    if (error instanceof LoopInputError) {
      reply = { id: request.id, ok: false, kind: 'input', field: error.field, message: error.message }
    } else if (error instanceof CalcTimeoutError) {
      reply = { id: request.id, ok: false, kind: 'timeout', message: error.message }
    } else {
      reply = { id: request.id, ok: false, kind: 'engine', message: error instanceof Error ? error.message : String(error) }
    }
  }
  parentPort?.postMessage(reply)
})
