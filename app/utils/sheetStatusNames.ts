import type { SheetStatus } from '#shared/schemas/sheet'

/** The words the screens and the print use for each state of a sheet's revision (product.md, "A sheet's life"). */
export const sheetStatusNames: Record<SheetStatus, string> = {
  draft: 'Draft',
  'in check': 'In check',
  returned: 'Returned',
  approved: 'Approved',
  issued: 'Issued',
  superseded: 'Superseded',
}

/** A revision as lists and the title block write it: its label once issued, else its index, said to be unissued. */
export function revisionWords(index: number, label: string | null) {
  return label ?? `${index} (not issued)`
}
