import type { SheetDetail } from '#shared/schemas/sheets'
import { conflictUnits, mergeForms, type ConflictUnit } from '~/utils/sheetConflict'
import { formOfDocument, formPathOf, loopPathOf, type FormReading, type SheetForm } from '~/utils/sheetForm'

export type SaveState = 'saved' | 'saving' | 'unsaved' | 'incomplete' | 'offline' | 'refused' | 'conflict' | 'read-only'

export interface SaveProblem {
  /** Form path of the field the server named, or null. */
  path: string | null
  message: string
}

interface LocalCopy {
  /** The stored version the edits started from. */
  version: number
  form: SheetForm
  at: string
}

// A pause after typing before the save goes out: short enough that little is ever unsaved, long enough that a
// word typed is one save, not one per key.
const SAVE_AFTER_MS = 800
const RETRY_FIRST_MS = 1000
const RETRY_MOST_MS = 30_000

/** The form's field of a path the server names: `document.scope`, `loop.blocks.P.den` (the engine's), `title`. */
function formPathOfServerField(form: SheetForm, field: string): string | null {
  const [head, ...rest] = field.split('.')
  if (head === 'document') return rest[0] === 'loop' ? loopPathOf(form, rest.slice(1)) : formPathOf(form, rest)
  if (head === 'loop') return loopPathOf(form, rest)
  return head === 'title' || head === 'loopTag' ? head : null
}

/** The engine's message starts with its field, which the field itself already shows. */
function withoutField(message: string, field: string | null): string {
  const loopField = field?.replace(/^(document\.)?loop\./, '')
  for (const prefix of [field, loopField]) if (prefix && message.startsWith(`${prefix}: `)) return message.slice(prefix.length + 2)
  return message
}

const formFromDetail = (detail: SheetDetail) => formOfDocument(detail.revision.document, detail.title, detail.loopTag)
const snapshot = (form: SheetForm) => JSON.stringify(form)

/**
 * Autosave of the sheet editor: PATCH with the version after a pause; the unsaved form kept in localStorage until
 * the server has it; a stale save (409) set beside the stored revision for the engineer to resolve; the server's
 * refusal (400, 422) kept local with its message at the field; a server that does not answer retried with backoff.
 */
export function useSheetAutosave(options: {
  detail: Ref<SheetDetail>
  values: () => SheetForm
  reading: ComputedRef<FormReading>
  replaceForm: (form: SheetForm) => void
}) {
  const { detail } = options
  const storageKey = computed(() => `loopwright-sheet-${detail.value.id}`)
  const version = ref(detail.value.revision.version)
  const saved = ref(snapshot(formFromDetail(detail.value)))
  const current = computed(() => snapshot(options.values()))
  const dirty = computed(() => current.value !== saved.value)
  const saving = ref(false)
  const offline = ref(false)
  const retryIn = ref(0)
  const problem = ref<SaveProblem | null>(null)
  const conflict = shallowRef<{ stored: SheetDetail; storedForm: SheetForm; mine: SheetForm; units: ConflictUnit[] } | null>(null)
  const canEdit = computed(() => detail.value.canEdit)

  const state = computed<SaveState>(() => {
    if (!canEdit.value) return 'read-only'
    if (conflict.value) return 'conflict'
    if (saving.value) return 'saving'
    if (offline.value) return 'offline'
    if (problem.value && dirty.value) return 'refused'
    if (dirty.value && !options.reading.value.valid) return 'incomplete'
    return dirty.value ? 'unsaved' : 'saved'
  })

  let timer: ReturnType<typeof setTimeout> | undefined
  let retryTimer: ReturnType<typeof setInterval> | undefined
  let attempt = 0

  function keepLocally() {
    if (!import.meta.client) return
    try {
      if (dirty.value) localStorage.setItem(storageKey.value, JSON.stringify({ version: version.value, form: options.values(), at: new Date().toISOString() } satisfies LocalCopy))
      else localStorage.removeItem(storageKey.value)
    } catch {
      // A full or disabled storage must not stop the save itself.
    }
  }

  function schedule(after = SAVE_AFTER_MS) {
    clearTimeout(timer)
    timer = setTimeout(() => void save(), after)
  }

  function retryLater() {
    offline.value = true
    const wait = Math.min(RETRY_MOST_MS, RETRY_FIRST_MS * 2 ** attempt)
    attempt++
    retryIn.value = Math.ceil(wait / 1000)
    clearInterval(retryTimer)
    retryTimer = setInterval(() => {
      retryIn.value = Math.max(0, retryIn.value - 1)
      if (retryIn.value === 0) clearInterval(retryTimer)
    }, 1000)
    schedule(wait)
  }

  async function save(): Promise<void> {
    clearTimeout(timer)
    if (!canEdit.value || conflict.value || !dirty.value) return
    if (saving.value) return schedule()
    const reading = options.reading.value
    if (!reading.valid) {
      // The form's own messages show at their fields; nothing goes to the server until they are fixed.
      problem.value = null
      return
    }
    const form = options.values()
    const sent = snapshot(form)
    saving.value = true
    try {
      const answer = await $fetch<SheetDetail>(`/api/sheets/${detail.value.id}`, {
        method: 'PATCH',
        body: { version: version.value, document: reading.valid, title: form.title.trim(), loopTag: form.loopTag.trim() },
      })
      detail.value = answer
      version.value = answer.revision.version
      saved.value = sent
      problem.value = null
      offline.value = false
      attempt = 0
      keepLocally()
      if (dirty.value) schedule()
    } catch (failure) {
      const status = (failure as { statusCode?: number }).statusCode ?? null
      const data = (failure as { data?: { data?: { current?: SheetDetail; field?: string; message?: string; issues?: unknown } ; message?: string } }).data
      if (status === 409 && data?.data?.current) {
        offline.value = false
        openConflict(data.data.current, form)
      } else if (status === 400 || status === 422) {
        offline.value = false
        const field = data?.data?.field ?? null
        const raw = data?.data?.message ?? data?.message ?? readApiFailure(failure).message
        problem.value = { path: field ? formPathOfServerField(form, field) : null, message: withoutField(raw, field) }
      } else if (status === null || status >= 500 || status === 408 || status === 429) {
        retryLater()
      } else {
        offline.value = false
        problem.value = { path: null, message: readApiFailure(failure).message }
      }
    } finally {
      saving.value = false
    }
  }

  function openConflict(stored: SheetDetail, mine: SheetForm) {
    const storedForm = formFromDetail(stored)
    const base = JSON.parse(saved.value) as SheetForm
    conflict.value = { stored, storedForm, mine, units: conflictUnits(mine, storedForm, base) }
  }

  /** The engineer's choices applied: the merged form saved over the stored version. */
  function resolve(takeStored: ReadonlySet<string>) {
    const open = conflict.value
    if (!open) return
    const merged = mergeForms(options.values(), open.storedForm, takeStored)
    detail.value = open.stored
    version.value = open.stored.revision.version
    saved.value = snapshot(open.storedForm)
    conflict.value = null
    problem.value = null
    options.replaceForm(merged)
    nextTick(() => {
      keepLocally()
      void save()
    })
  }

  /**
   * The sheet as read again after a transition: the next revision after revise starts at version 1, so the
   * version and the saved form are taken from it (a save over the old revision's version would be refused).
   */
  function adopt(fresh: SheetDetail) {
    clearTimeout(timer)
    detail.value = fresh
    version.value = fresh.revision.version
    saved.value = snapshot(formFromDetail(fresh))
    conflict.value = null
    problem.value = null
    options.replaceForm(formFromDetail(fresh))
  }

  /**
   * Saves what is typed now, before a lifecycle action names the version: a submit must not go out with the
   * version before the last keystrokes, leaving them unsaved behind a revision in check. True when all is saved.
   */
  async function flush(): Promise<boolean> {
    if (!canEdit.value) return true
    if (saving.value) await new Promise<void>((resolve) => {
      const stop = watch(saving, (now) => {
        if (!now) {
          stop()
          resolve()
        }
      })
    })
    if (dirty.value) await save()
    return !dirty.value
  }

  watch(current, () => {
    if (!canEdit.value) return
    keepLocally()
    if (dirty.value) {
      if (problem.value) problem.value = null
      if (!offline.value) schedule()
    }
  })

  function beforeUnload(event: BeforeUnloadEvent) {
    if (!dirty.value || !canEdit.value) return
    event.preventDefault()
    event.returnValue = ''
  }

  onMounted(() => {
    window.addEventListener('beforeunload', beforeUnload)
    // Edits a closed tab or a lost connection left behind: restored over the same version, or set beside a newer one.
    let local: LocalCopy | null = null
    try {
      local = JSON.parse(localStorage.getItem(storageKey.value) ?? 'null') as LocalCopy | null
    } catch {
      local = null
    }
    if (!local || !canEdit.value || snapshot(local.form) === saved.value) return
    if (local.version === version.value) {
      options.replaceForm(local.form)
      schedule(0)
    } else openConflict(detail.value, local.form)
  })
  onBeforeUnmount(() => {
    window.removeEventListener('beforeunload', beforeUnload)
    clearTimeout(timer)
    clearInterval(retryTimer)
  })
  onBeforeRouteLeave(() => {
    if (dirty.value && canEdit.value && !window.confirm('This sheet has edits the server does not have yet. Leave anyway? They stay in this browser and come back when you open the sheet again.')) return false
  })

  return { state, version, problem, conflict, retryIn, dirty, save, resolve, adopt, flush }
}
