import { defaultSymbolTex } from '#shared/calc/tex'

/** A loop's parameters as the screens need them to name a symbol: the loop file's own `tex`, where given. */
export type SymbolNames = Readonly<Record<string, { tex?: string } | undefined>>

/**
 * How a parameter's symbol is typeset wherever a result names it (the tolerance corners, the stable range): the
 * loop's own `tex`, else the engine's default, as the Inputs table sets it. Never the symbol as typed.
 */
export function symbolTex(symbol: string, parameters?: SymbolNames | null): string {
  return parameters?.[symbol]?.tex ?? defaultSymbolTex(symbol)
}
