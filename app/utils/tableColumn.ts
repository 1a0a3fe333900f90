/** A column of UiDataTable. */
export interface TableColumn {
  key: string
  label: string
  /** The server can sort by it (the route's sortable list). */
  sortable?: boolean
  align?: 'start' | 'end'
  /** Hidden below laptop width to keep the table readable. */
  wide?: boolean
}

/** A choice above a UiListView's table, kept in the URL under `name` and sent to the route as that query field. */
export interface ListFilter {
  name: string
  label: string
  /** The first option, which sets no filter: "Any role". */
  anyText: string
  options: ReadonlyArray<{ value: string; label: string }>
}

/** The data key of a UiListView's route: `refreshNuxtData(listDataKey(route))` asks the list again (after a change). */
export function listDataKey(route: string) {
  return `list:${route}`
}
