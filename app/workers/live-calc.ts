// The engine in a Web Worker: the sheet editor's live results, computed in the browser so a keystroke is not a
// server round trip (measured by the editor's benchmark, scripts/bench.ts). The SAVED result is always the
// server's (PATCH /api/sheets/[id]); this one only previews it.
import { CalcTimeoutError, LoopInputError, evaluateLoop, type CalcResult } from '../../shared/calc'
import { previewBlocks, type BlockPreview, type PreviewInput } from '../../shared/calc/block-preview'

export interface LiveRequest {
  seq: number
  /** The loop file as the form stands (loopFileOf of the document), or null when the form itself is not complete. */
  loop: unknown | null
  preview: PreviewInput
}

export interface LiveProblem {
  kind: 'input' | 'time-limit' | 'other'
  field: string | null
  message: string
}

export interface LiveAnswer {
  seq: number
  result: CalcResult | null
  problem: LiveProblem | null
  previews: Record<string, BlockPreview>
  /** Time the engine took in the worker, ms. */
  engineMs: number
}

const scope = self as unknown as { onmessage: ((event: MessageEvent<LiveRequest>) => void) | null; postMessage(answer: LiveAnswer): void }

scope.onmessage = (event) => {
  const { seq, loop, preview } = event.data
  const started = performance.now()
  let previews: Record<string, BlockPreview> = {}
  try {
    previews = previewBlocks(preview)
  } catch {
    previews = {}
  }
  let result: CalcResult | null = null
  let problem: LiveProblem | null = null
  if (loop !== null) {
    try {
      result = evaluateLoop(loop)
    } catch (error) {
      if (error instanceof LoopInputError) problem = { kind: 'input', field: error.field, message: error.reason }
      else if (error instanceof CalcTimeoutError) problem = { kind: 'time-limit', field: null, message: error.message }
      else problem = { kind: 'other', field: null, message: error instanceof Error ? error.message : String(error) }
    }
  }
  scope.postMessage({ seq, result, problem, previews, engineMs: performance.now() - started })
}
