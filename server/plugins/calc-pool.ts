// Warm the calculation workers when the server starts (server/utils/calc-pool.ts).
export default defineNitroPlugin(() => {
  warmCalcPool().catch((error: unknown) => {
    console.error('[calc] the calculation workers did not start:', error)
  })
})
