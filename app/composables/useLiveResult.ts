import type { CalcResult } from '#shared/calc'
import type { BlockPreview, PreviewInput } from '#shared/calc/block-preview'
import type { LiveAnswer, LiveProblem, LiveRequest } from '~/workers/live-calc'

/**
 * The engine run in a Web Worker on every change of the form: no pause before asking, and while the worker is
 * busy only the newest form waits (the ones typed in between are skipped, never queued). The result shown is
 * the newest the worker finished.
 */
export function useLiveResult(input: () => { loop: unknown | null; preview: PreviewInput }) {
  const result = shallowRef<CalcResult | null>(null)
  const problem = shallowRef<LiveProblem | null>(null)
  const previews = shallowRef<Record<string, BlockPreview>>({})
  const computing = ref(false)
  const engineMs = ref<number | null>(null)
  /** How many form changes the shown result is behind (0: up to date). */
  const seq = ref(0)
  const shownSeq = ref(0)

  let worker: Worker | null = null
  let busy = false
  let waiting: LiveRequest | null = null

  function send(request: LiveRequest) {
    if (!worker) return
    if (busy) {
      waiting = request
      return
    }
    busy = true
    computing.value = true
    // A plain copy: a reactive proxy cannot cross to the worker.
    worker.postMessage(JSON.parse(JSON.stringify(request)))
  }

  function receive(event: MessageEvent<LiveAnswer>) {
    busy = false
    const answer = event.data
    previews.value = answer.previews
    if (answer.result) result.value = answer.result
    problem.value = answer.problem
    engineMs.value = answer.engineMs
    shownSeq.value = answer.seq
    if (waiting) {
      const next = waiting
      waiting = null
      send(next)
    } else computing.value = false
  }

  onMounted(() => {
    worker = new Worker(new URL('../workers/live-calc.ts', import.meta.url), { type: 'module' })
    worker.addEventListener('message', receive)
    worker.addEventListener('error', (event) => {
      busy = false
      computing.value = false
      problem.value = { kind: 'other', field: null, message: `The live preview stopped (${event.message || 'worker error'}); the saved result is still the server's.` }
    })
    watch(
      input,
      (next) => {
        seq.value++
        send({ seq: seq.value, loop: next.loop, preview: next.preview })
      },
      { immediate: true, deep: true },
    )
  })
  onBeforeUnmount(() => {
    worker?.terminate()
    worker = null
  })

  const stale = computed(() => problem.value !== null && result.value !== null)
  return { result, problem, previews, computing, engineMs, stale, seq, shownSeq }
}
