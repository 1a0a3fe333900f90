import type { InjectionKey } from 'vue'

/**
 * Provided as true by the print view: every display formula below it is fitted to its column
 * (CalcTex's `fit`) and none is folded, because paper cannot scroll or be clicked.
 */
export const texFitKey: InjectionKey<boolean> = Symbol('tex-fit')
