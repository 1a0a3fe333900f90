// Loop files the server tests send.

/**
 * Fourteen lags in series, ten time constants with a tolerance band (1,024 corners, the most allowed), each
 * corner judged on step and frequency criteria: past the 10 s time limit (measured with the command line).
 */
export function heavyLoop() {
  const lags = Array.from({ length: 14 }, (_, i) => i + 1)
  return {
    title: 'A loop too heavy to finish in time',
    parameters: {
      K: { value: 0.5 },
      ...Object.fromEntries(lags.map((i) => [`T${i}`, i <= 10 ? { value: 1 + 0.1 * i, min: 0.9 + 0.09 * i, max: 1.1 + 0.11 * i } : { value: 1 + 0.1 * i }])),
    },
    criteria: { overshoot_pct: { max: 10 }, phase_margin_deg: { min: 30 }, settling_time_s: { max: 1000 } },
    blocks: {
      K: { role: 'controller', label: 'Gain', num: 'K' },
      ...Object.fromEntries(lags.map((i) => [`G${i}`, { role: 'plant', label: `Lag ${i}`, num: '1', den: `T${i}*s + 1` }])),
    },
    structure: { feedback: { forward: { series: ['K', ...lags.map((i) => `G${i}`)] }, return: null, sign: -1 } },
  }
}

/** One lag under unity feedback: the smallest calculation, a few milliseconds. */
export const smallLoop = {
  parameters: {},
  blocks: { G: { role: 'plant', label: 'Lag', num: '1', den: 's + 1' } },
  structure: { feedback: { forward: 'G', return: null, sign: -1 } },
}
