/**
 * Sort, filter and page state of a server-side table, kept in the page's URL so
 * a view can be reloaded, shared and stepped back through. `query` feeds
 * useFetch directly; it holds only what differs from the route's defaults.
 */
export interface ListQueryOptions<F extends string> {
  sort: string
  dir?: 'asc' | 'desc'
  pageSize?: number
  filters?: readonly F[]
}

export function useListQuery<F extends string = never>(options: ListQueryOptions<F>) {
  const route = useRoute()
  const router = useRouter()
  const pageSize = options.pageSize ?? 20

  const read = (name: string) => {
    const value = route.query[name]
    return typeof value === 'string' && value !== '' ? value : undefined
  }

  const sort = computed(() => read('sort') ?? options.sort)
  const dir = computed<'asc' | 'desc'>(() => (read('dir') === 'desc' ? 'desc' : read('dir') === 'asc' ? 'asc' : (options.dir ?? 'asc')))
  const page = computed(() => Math.max(1, Number.parseInt(read('page') ?? '1', 10) || 1))
  const text = computed(() => read('q') ?? '')
  const filters = computed(() => {
    const chosen = {} as Partial<Record<F, string>>
    for (const name of options.filters ?? []) {
      const value = read(name)
      if (value) chosen[name] = value
    }
    return chosen
  })

  const query = computed(() => ({
    sort: sort.value,
    dir: dir.value,
    page: page.value,
    pageSize,
    ...(text.value ? { q: text.value } : {}),
    ...filters.value,
  }))

  function update(patch: Record<string, string | number | undefined>) {
    const next: Record<string, string> = {}
    for (const [name, value] of Object.entries({ ...route.query, ...patch })) {
      if (value !== undefined && value !== null && value !== '') next[name] = String(value)
    }
    return router.replace({ query: next })
  }

  /** A click on a column heading: the same column flips direction, another starts ascending. */
  function sortBy(column: string) {
    const nextDir = sort.value === column && dir.value === 'asc' ? 'desc' : 'asc'
    return update({ sort: column, dir: nextDir, page: undefined })
  }
  function goToPage(n: number) {
    return update({ page: n > 1 ? n : undefined })
  }
  function filterBy(name: F | 'q', value: string | undefined) {
    return update({ [name]: value || undefined, page: undefined })
  }

  // The text box writes to the URL a moment after typing stops, not on every key.
  const textDraft = ref(text.value)
  watch(text, (value) => {
    if (value !== textDraft.value.trim()) textDraft.value = value
  })
  let pending: ReturnType<typeof setTimeout> | undefined
  watch(textDraft, (value) => {
    clearTimeout(pending)
    pending = setTimeout(() => filterBy('q', value.trim()), 300)
  })

  return { query, sort, dir, page, pageSize, text, textDraft, filters, sortBy, goToPage, filterBy }
}
