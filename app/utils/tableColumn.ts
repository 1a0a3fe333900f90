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
