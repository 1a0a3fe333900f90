/** The contract's limits on a loop file (calc-contract.md, "Bad input"). */
export const MAX_DEGREE = 40
export const MAX_BLOCKS = 64
export const MAX_FILE_BYTES = 256 * 1024
/** Default time limit of one evaluation, ms. */
export const DEFAULT_DEADLINE_MS = 10_000
/** Padé orders the engine accepts; 2 is the contract's default. */
export const MAX_PADE_ORDER = 10
/** Largest whole exponent written in an expression; larger ones exceed every degree limit or blow up the coefficients. */
export const MAX_EXPONENT = 64
