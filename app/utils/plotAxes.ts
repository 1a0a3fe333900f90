// Scales and curves of the plots over time (CalcStepPlot, StepTestPlot), drawn inside CalcPlotFrame: one frame,
// one time axis and one way to fit a value axis, so the two plots line up and read alike on the sheet page.
import { scaleLinear, type ScaleLinear } from 'd3-scale'
import { line } from 'd3-shape'

export type LinearScale = ScaleLinear<number, number>

/** Width of every plot's view box, and the margins its tick labels and axis titles sit in. */
export const PLOT_WIDTH = 560
export const plotFrame = { left: 62, right: 18, top: 14, bottom: 46 } as const

/** Time from 0 to the last sample, across the frame (0 to 1 s while there is no later sample). */
export function timeScale(lastTime: number | undefined): LinearScale {
  const last = lastTime ?? 1
  return scaleLinear()
    .domain([0, last > 0 ? last : 1])
    .range([plotFrame.left, PLOT_WIDTH - plotFrame.right])
}

/**
 * A value axis from `low` to `high`, widened to at least `minSpan` (a flat record still gets an axis), rounded
 * out to about `ticks` ticks (d3's nice), drawn from `bottom` up to `top` in the view box.
 */
export function valueScale(low: number, high: number, { bottom, top, ticks, minSpan }: { bottom: number; top: number; ticks: number; minSpan: number }): LinearScale {
  return scaleLinear()
    .domain([low, Math.max(high, low + minSpan)])
    .nice(ticks)
    .range([bottom, top])
}

/** The SVG path of `values` over `times`, leaving out the samples that are not finite numbers. */
export function curvePath(times: readonly number[], values: readonly number[], x: LinearScale, y: LinearScale): string {
  const points = times.map((t, i) => [t, values[i]!] as [number, number]).filter(([t, v]) => Number.isFinite(t) && Number.isFinite(v))
  return (
    line<[number, number]>()
      .x(([t]) => x(t))
      .y(([, v]) => y(v))(points) ?? ''
  )
}
