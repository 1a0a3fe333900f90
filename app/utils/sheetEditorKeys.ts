import type { ComputedRef, InjectionKey } from 'vue'

/** Form path → a message from the engine or the server for that field, shown where the schema has none. */
export const sheetFieldProblemsKey: InjectionKey<ComputedRef<Record<string, string>>> = Symbol('sheet-field-problems')
/** Whether the sheet may be edited by the viewer (draft or returned, an engineer member). */
export const sheetEditableKey: InjectionKey<ComputedRef<boolean>> = Symbol('sheet-editable')

/** What the structure editor's nodes share: the edit of the whole tree, the blocks to choose from. */
export interface StructureEdit {
  apply(change: (root: import('#shared/schemas/loop').StructureNode) => import('#shared/schemas/loop').StructureNode): void
  blockIds: ComputedRef<string[]>
  labels: ComputedRef<Record<string, string | undefined>>
  /** The block a new place in the structure starts with: the first not yet in it, else the first. */
  nextBlock(): string
}
export const structureEditKey: InjectionKey<StructureEdit> = Symbol('structure-edit')
