import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { frequencyResponse } from '#shared/calc/frequency'
import { brentZero, polishCrossing, polishCrossings } from '#shared/calc/crossing'
import { stabilityMargins } from '#shared/calc/margins'
import type { Complex, OpenLoop } from '#shared/calc/types'

const examples = fileURLToPath(new URL('../../../shared/examples/expected/', import.meta.url))
const expected = (name: string) => JSON.parse(readFileSync(`${examples}${name}.json`, 'utf8'))

function evaluate(p: number[], s: Complex): Complex {
  let re = 0
  let im = 0
  for (const c of p) {
    const next = re * s.re - im * s.im + c
    im = re * s.im + im * s.re
    re = next
  }
  return { re, im }
}

/** L(s) = num/den·e^{−sθ}; `hidden` hands the delay over only through `at`, as for a delay inside an inner loop. */
function openLoop(num: number[], den: number[], delay = 0, hidden = false): OpenLoop {
  return {
    num,
    den,
    delay_s: hidden ? null : delay,
    at: (s) => {
      const n = evaluate(num, s)
      const d = evaluate(den, s)
      const q = d.re * d.re + d.im * d.im
      const re = (n.re * d.re + n.im * d.im) / q
      const im = (n.im * d.re - n.re * d.im) / q
      const m = Math.exp(-s.re * delay)
      const c = m * Math.cos(-s.im * delay)
      const si = m * Math.sin(-s.im * delay)
      return { re: re * c - im * si, im: re * si + im * c }
    },
  }
}

/** Contract tolerance for margins and crossover frequencies: 1e-4 relative. */
function within(value: number | null, want: number, relative = 1e-4) {
  expect(value).not.toBeNull()
  expect(Math.abs((value as number) - want)).toBeLessThanOrEqual(relative * Math.abs(want))
}

describe('stabilityMargins', () => {
  it('gives GM = 20·log10 6 = 15.563 dB at √2 rad/s for 1/(s(s+1)(s+2))', () => {
    // Source: closed form, worked in Ogata, "Modern Control Engineering", and Nise, "Control Systems
    // Engineering" (from memory): Im L(jω) = 0 at ω² = 2, where |L| = 1/6.
    const m = stabilityMargins(openLoop([1], [1, 3, 2, 0]))
    within(m.gain_margin_db, 20 * Math.log10(6))
    within(m.phase_crossover_rad_s, Math.SQRT2)
    expect(m.crossings.phase).toHaveLength(1)
    expect(m.warnings).toEqual([])
  })

  it('gives the closed-form phase margin of K/(s(τs + 1)) and no gain margin', () => {
    // Source: closed form: |L| = 1 at ω_c² = (√(1 + 4τ²K²) − 1)/(2τ²), PM = 90° − atan(τω_c); the phase
    // stays above −180°, so no gain margin (e.g. Nise ch. 10, from memory).
    for (const [K, tau] of [[2, 1], [10, 0.5], [0.3, 4]]) {
      const m = stabilityMargins(openLoop([K], [tau, 1, 0]))
      const wc = Math.sqrt((Math.sqrt(1 + 4 * tau * tau * K * K) - 1) / (2 * tau * tau))
      within(m.gain_crossover_rad_s, wc)
      within(m.phase_margin_deg, 90 - (Math.atan(tau * wc) * 180) / Math.PI)
      expect(m.gain_margin_db).toBeNull()
      expect(m.warnings.join(' ')).toMatch(/never crosses the negative real axis/)
    }
  })

  for (const hidden of [false, true]) {
    it(`gives the closed-form margins of the pure delay loop K·e^{−θs}/s (${hidden ? 'delay only through at' : 'delay_s given'})`, () => {
      // Source: closed form: phase −90° − ωθ reaches −180° at ω = π/(2θ), where |L| = 2Kθ/π;
      // |L| = K/ω = 1 at ω = K, PM = 90° − Kθ·180/π (common practice for integrating processes with dead time).
      for (const [K, theta] of [[0.5, 2], [0.1, 3], [2, 0.05]]) {
        const m = stabilityMargins(openLoop([K], [1, 0], theta, hidden))
        within(m.phase_crossover_rad_s, Math.PI / (2 * theta))
        within(m.gain_margin_db, -20 * Math.log10((2 * K * theta) / Math.PI))
        within(m.gain_crossover_rad_s, K)
        within(m.phase_margin_deg, 90 - (K * theta * 180) / Math.PI)
        // Every crossing of −180° − 360°k is listed in order: ω_k = (π/2 + 2πk)/θ.
        m.crossings.phase.slice(0, 5).forEach((w, k) => within(w, (Math.PI / 2 + 2 * Math.PI * k) / theta))
        expect(m.crossings.phase.length).toBeGreaterThan(5)
        expect(m.crossings.phase.length).toBeLessThanOrEqual(50)
      }
    })
  }

  it('finds both phase crossovers of a conditionally stable loop and reports the smaller margin', () => {
    // Source: closed form for 5(s+1)²/(s³(s/100+1)²): the phase −270° + 2(atan ω − atan(ω/100)) is −180°
    // where tan(atan ω − atan(ω/100)) = 1, i.e. 0.01ω² − 0.99ω + 1 = 0.
    const num = [5, 10, 5]
    const den = [1e-4, 0.02, 1, 0, 0, 0]
    const m = stabilityMargins(openLoop(num, den))
    const disc = Math.sqrt(0.99 * 0.99 - 0.04)
    const w1 = (0.99 - disc) / 0.02
    const w2 = (0.99 + disc) / 0.02
    expect(m.crossings.phase).toHaveLength(2)
    within(m.crossings.phase[0], w1)
    within(m.crossings.phase[1], w2)
    const gm = (w: number) => {
      const L = openLoop(num, den).at({ re: 0, im: w })
      return -20 * Math.log10(Math.hypot(L.re, L.im))
    }
    // |GM| at ω1 is the smaller (about −19.6 dB against +31.7 dB).
    within(m.phase_crossover_rad_s, w1)
    within(m.gain_margin_db, gm(w1))
    expect(Math.abs(gm(w1))).toBeLessThan(Math.abs(gm(w2)))
  })

  // Source: shared/examples/expected/*.json (independent reference with the exact frequency response).
  const examplesOpenLoop: Record<string, [number[], number[]]> = {
    // L = Kc(Ti s + 1)/(Ti s) · Kd/(td s + 1) · Kg wn²/(s² + 2ζ wn s + wn²) · Kt at the example's values.
    'booster-pressure': [[6.48, 2.16], [1.5, 5.7, 8.775, 6.75, 0]],
    'third-order-gain-range': [[500], [1, 18, 77, 0]],
    'type1-gain-margin': [[1], [1, 3, 2, 0]],
  }
  for (const [name, [num, den]] of Object.entries(examplesOpenLoop)) {
    it(`matches the reference margins of the ${name} example to 1e-4`, () => {
      const ref = expected(name).margins
      const m = stabilityMargins(openLoop(num, den))
      within(m.gain_margin_db, ref.gain_margin_db)
      within(m.phase_crossover_rad_s, ref.phase_crossover_rad_s)
      within(m.phase_margin_deg, ref.phase_margin_deg)
      within(m.gain_crossover_rad_s, ref.gain_crossover_rad_s)
      expect(m.crossings.phase).toHaveLength(ref.crossings.phase.length)
      expect(m.crossings.gain).toHaveLength(ref.crossings.gain.length)
    })
  }

  it('agrees with itself whether the delay comes as delay_s or only through at (PI on a first-order lag with dead time)', () => {
    // Source: consistency of the two exact routes (polynomial gain crossover with bracketed phase crossings,
    // against the walk on at with bounded phase steps); no outside value.
    const num = [0.6 * 1.4 * 8, 0.6 * 1.4]
    const den = [48, 8, 0]
    const a = stabilityMargins(openLoop(num, den, 2))
    const b = stabilityMargins(openLoop(num, den, 2, true))
    within(b.gain_margin_db, a.gain_margin_db as number, 1e-8)
    within(b.phase_crossover_rad_s, a.phase_crossover_rad_s as number, 1e-8)
    within(b.phase_margin_deg, a.phase_margin_deg as number, 1e-8)
    within(b.gain_crossover_rad_s, a.gain_crossover_rad_s as number, 1e-8)
    // The crossing found satisfies the definition: L(jω) on the negative real axis.
    const L = openLoop(num, den, 2).at({ re: 0, im: a.phase_crossover_rad_s as number })
    expect(L.re).toBeLessThan(0)
    expect(Math.abs(L.im)).toBeLessThan(1e-9 * Math.abs(L.re))
  })

  it('says why a margin is missing, and warns when L(0) lies on the negative real axis', () => {
    // Source: the contract's rules (calc-contract.md, "Result", margins) on closed-form loops.
    const low = stabilityMargins(openLoop([0.5], [1, 1]))
    expect(low.phase_margin_deg).toBeNull()
    expect(low.gain_margin_db).toBeNull()
    expect(low.warnings.join(' ')).toMatch(/below 0 dB/)
    const negative = stabilityMargins(openLoop([-2], [1, 1]))
    expect(negative.warnings.join(' ')).toMatch(/L\(0\) = -2 lies on the negative real axis/)
    expect(negative.gain_margin_db).toBeNull()
  })
})

describe('frequencyResponse', () => {
  it('gives the exact, continuous phase −90° − ωθ·180/π and magnitude K/ω of K·e^{−θs}/s', () => {
    // Source: closed form.
    for (const hidden of [false, true]) {
      const K = 0.5
      const theta = 2
      const r = frequencyResponse(openLoop([K], [1, 0], theta, hidden), 300)
      expect(r.w).toHaveLength(300)
      r.w.forEach((w, i) => {
        expect(r.magnitude_db[i]).toBeCloseTo(20 * Math.log10(K / w), 9)
        expect(r.phase_deg[i]).toBeCloseTo(-90 - (w * theta * 180) / Math.PI, 6)
      })
      // The range covers the crossovers.
      expect(r.w[0]).toBeLessThan(K)
      expect(r.w[r.w.length - 1]).toBeGreaterThan(Math.PI / (2 * theta))
    }
  })

  it('starts a type-1 loop at −90° and runs to −270° for 1/(s(s+1)(s+2))', () => {
    // Source: closed form, phase = −90° − atan ω − atan(ω/2).
    const r = frequencyResponse(openLoop([1], [1, 3, 2, 0]))
    r.w.forEach((w, i) => expect(r.phase_deg[i]).toBeCloseTo(-90 - ((Math.atan(w) + Math.atan(w / 2)) * 180) / Math.PI, 9))
    expect(r.phase_deg[r.phase_deg.length - 1]).toBeLessThan(-260)
  })
})

describe('brentZero and polishCrossing', () => {
  it('finds the zero of cos x − x on a bracket to rounding level', () => {
    // Source: the fixed point of cos, 0.7390851332151607 (a well-known constant; from memory), checked by its own definition.
    const f = (x: number) => Math.cos(x) - x
    const x = brentZero(f, 0, 1, f(0), f(1))
    expect(Math.abs(x - 0.7390851332151607)).toBeLessThan(1e-15)
    expect(Math.abs(f(x))).toBeLessThan(1e-15)
  })

  it('polishes a candidate onto its own crossing, never a neighbour, and drops a candidate with no crossing nearby', () => {
    // Source: closed form: sin(ln ω) is zero at ω = e^{kπ}; a candidate 1 % off e^{π} polishes onto e^{π}.
    const f = (w: number) => Math.sin(Math.log(w))
    const polished = polishCrossing(f, Math.exp(Math.PI) * 1.01, Math.exp(Math.PI / 2), Math.exp((3 * Math.PI) / 2))
    expect(Math.abs((polished as number) - Math.exp(Math.PI))).toBeLessThan(1e-13 * Math.exp(Math.PI))
    // 1 + ω² never reaches zero: no crossing, so null.
    expect(polishCrossing((w) => 1 + w * w, 2, 1, 4)).toBeNull()
    // The list form merges duplicates and drops the candidate without a crossing.
    const list = polishCrossings(f, [Math.exp(Math.PI) * 0.999, Math.exp(Math.PI) * 1.002, Math.exp(Math.PI / 2)], 1e-9)
    expect(list).toHaveLength(1)
    expect(Math.abs(list[0]! - Math.exp(Math.PI))).toBeLessThan(1e-13 * Math.exp(Math.PI))
  })
})
