// Loop files the server tests send.

/**
 * A gain with a 20 s dead time and 30 lags in series, ten time constants with a tolerance band (1,024 corners,
 * the most allowed), each corner judged on step and frequency criteria. Measured in-process with no time limit:
 * 21.8 s on this 2-core machine when idle, so well past the engine's 10 s limit.
 */
export function heavyLoop() {
  const lags = Array.from({ length: 30 }, (_, i) => i + 1)
  return {
    title: 'A loop too heavy to finish in time',
    parameters: {
      K: { value: 0.02 },
      ...Object.fromEntries(lags.filter((i) => i <= 10).map((i) => [`T${i}`, { value: 1 + 0.1 * i, min: 0.9 + 0.09 * i, max: 1.1 + 0.11 * i }])),
    },
    criteria: { overshoot_pct: { max: 10 }, phase_margin_deg: { min: 30 }, settling_time_s: { max: 1000 } },
    blocks: {
      K: { role: 'controller', label: 'Gain', num: 'K', delay: '20' },
      ...Object.fromEntries(lags.map((i) => [`G${i}`, { role: 'plant', label: `Lag ${i}`, num: '1', den: i <= 10 ? `T${i}*s + 1` : `${(1 + 0.05 * i).toFixed(2)}*s + 1` }])),
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
