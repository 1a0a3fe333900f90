/**
 * Seeded random loop files for the reference and property tests.
 *
 * Every loop is a loop file of calc-contract.md: parameters with values (some
 * with a min/max band), blocks whose num/den are expressions of the
 * parameters, and a structure mixing single loops, return paths, parallel
 * paths with signs, cascades (feedback inside feedback), occasional positive
 * feedback and occasional dead time. Time constants, natural frequencies and
 * damping ratios are drawn from ranges a process plant sees (0.2 to 5 s,
 * 0.3 to 3 rad/s, zeta 0.25 to 0.9) so the closed-loop polynomials stay
 * well-conditioned up to degree ~10 and the contract's tolerances mean something.
 * Gains are drawn so that roughly half of the loops are stable.
 */

export interface RandomLoopParameter {
  value: number
  unit?: string
  min?: number
  max?: number
  tex?: string
  note?: string
}
export interface RandomLoopBlock {
  role: 'controller' | 'actuator' | 'plant' | 'sensor' | 'compensator' | 'other'
  label?: string
  num: string
  den: string
  delay?: string
}
export type RandomNode =
  | string
  | { series: RandomNode[] }
  | { parallel: RandomNode[]; signs?: Array<1 | -1> }
  | { feedback: { forward: RandomNode; return: RandomNode | null; sign: 1 | -1 } }
export interface RandomLoopFile {
  title: string
  parameters: Record<string, RandomLoopParameter>
  blocks: Record<string, RandomLoopBlock>
  structure: RandomNode
  delay_approximation?: { method: 'pade'; order: number }
  criteria?: Record<string, { min?: number; max?: number }>
}

/** mulberry32: a small, well-known 32-bit seeded generator (public domain). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** A number with three significant digits, as an engineer would write it. */
function tidy(x: number): number {
  return Number(x.toPrecision(3))
}

export class LoopBuilder {
  readonly parameters: Record<string, RandomLoopParameter> = {}
  readonly blocks: Record<string, RandomLoopBlock> = {}
  private counters: Record<string, number> = {}
  hasDelay = false
  bands = 0

  constructor(readonly rnd: () => number) {}

  uniform(lo: number, hi: number): number {
    return lo + (hi - lo) * this.rnd()
  }
  logUniform(lo: number, hi: number): number {
    return Math.exp(this.uniform(Math.log(lo), Math.log(hi)))
  }
  pick<T>(items: T[]): T {
    return items[Math.floor(this.rnd() * items.length)]!
  }
  chance(p: number): boolean {
    return this.rnd() < p
  }

  /** A parameter named prefix + running number; a band on some of them (at most 3 a loop, so tolerance corners stay few). */
  param(prefix: string, value: number, unit: string, tex: string): string {
    const n = (this.counters[prefix] = (this.counters[prefix] ?? 0) + 1)
    const name = `${prefix}${n}`
    const v = tidy(value)
    // K_c becomes K_{c,1}, T becomes T_{1}: one subscript, as TeX needs.
    const sub = tex.match(/^(.*)_\{?([^{}]+)\}?$/)
    const p: RandomLoopParameter = { value: v, unit, tex: sub ? `${sub[1]}_{${sub[2]},${n}}` : `${tex}_{${n}}` }
    if (this.bands < 3 && this.chance(0.2)) {
      p.min = tidy(v * 0.9)
      p.max = tidy(v * 1.1)
      if (p.min > v) p.min = v
      if (p.max < v) p.max = v
      this.bands++
    }
    this.parameters[name] = p
    return name
  }

  block(prefix: string, b: RandomLoopBlock): string {
    const n = (this.counters[`#${prefix}`] = (this.counters[`#${prefix}`] ?? 0) + 1)
    const id = `${prefix}${n}`
    this.blocks[id] = b
    return id
  }

  /** One process element: a lag, a second-order element, factored poles or literal coefficients. */
  plant(allowDelay: boolean): string {
    const kind = this.pick(['lag', 'lag', 'second', 'factored', 'literal', 'lags2'])
    const K = this.param('Kp', this.logUniform(0.5, 2), '', 'K_p')
    let b: RandomLoopBlock
    if (kind === 'lag') {
      const T = this.param('T', this.logUniform(0.2, 5), 's', 'T')
      b = { role: 'plant', label: 'First-order lag', num: K, den: `${T}*s + 1` }
    } else if (kind === 'lags2') {
      const T1 = this.param('T', this.logUniform(0.2, 5), 's', 'T')
      const T2 = this.param('T', this.logUniform(0.2, 5), 's', 'T')
      b = { role: 'plant', label: 'Two lags', num: K, den: `(${T1}*s + 1)*(${T2}*s + 1)` }
    } else if (kind === 'second') {
      const w = this.param('wn', this.logUniform(0.3, 3), 'rad/s', '\\omega_n')
      const z = this.param('zeta', this.uniform(0.25, 0.9), '', '\\zeta')
      b = { role: 'plant', label: 'Second-order element', num: `${K}*${w}^2`, den: `s^2 + 2*${z}*${w}*s + ${w}^2` }
    } else if (kind === 'factored') {
      const a = this.param('a', this.logUniform(0.2, 5), '1/s', 'a')
      const c = this.param('a', this.logUniform(0.2, 5), '1/s', 'a')
      b = { role: 'plant', label: 'Two real poles', num: `${K}*${a}*${c}`, den: `(s + ${a})*(s + ${c})` }
    } else {
      // Literal coefficients, some in scientific notation, to exercise the parser.
      const T = tidy(this.logUniform(0.2, 5))
      const lit = this.chance(0.5) ? `${(T * 10).toFixed(1)}e-1` : `${T}`
      b = { role: 'plant', label: 'Lag with literal time constant', num: K, den: `${lit}*s + 1` }
    }
    if (allowDelay && this.chance(0.15)) {
      b.delay = this.param('L', this.logUniform(0.05, 0.6), 's', '\\theta')
      this.hasDelay = true
    }
    return this.block('P', b)
  }

  controller(gainScale: number): string {
    const kind = this.pick(['P', 'PI', 'PI', 'PID', 'lead', 'I'])
    // One controller in three is tuned hot, so unstable loops are common too.
    const hot = this.chance(1 / 3) ? 8 : 1
    const Kc = this.param('Kc', hot * gainScale * this.logUniform(0.5, 8), '', 'K_c')
    if (kind === 'P') return this.block('C', { role: 'controller', label: 'Proportional', num: Kc, den: '1' })
    if (kind === 'I') return this.block('C', { role: 'controller', label: 'Integral', num: `${Kc}/10`, den: 's' })
    if (kind === 'PI') {
      const Ti = this.param('Ti', this.logUniform(2, 20), 's', 'T_i')
      return this.block('C', { role: 'controller', label: 'PI', num: `${Kc}*(${Ti}*s + 1)`, den: `${Ti}*s` })
    }
    if (kind === 'PID') {
      const Ti = this.param('Ti', this.logUniform(2, 20), 's', 'T_i')
      const Td = this.param('Td', this.logUniform(0.1, 1), 's', 'T_d')
      return this.block('C', {
        role: 'controller',
        label: 'PID with derivative filter',
        num: `${Kc}*(${Ti}*${Td}*s^2 + ${Ti}*s + 1)`,
        den: `${Ti}*s*(0.1*${Td}*s + 1)`,
      })
    }
    const Ta = this.param('Ta', this.logUniform(0.3, 3), 's', 'T_a')
    const Tb = this.param('Tb', this.logUniform(0.05, 0.3), 's', 'T_b')
    return this.block('C', { role: 'compensator', label: 'Lead', num: `${Kc}*(${Ta}*s + 1)`, den: `${Tb}*s + 1` })
  }

  sensor(): string {
    if (this.chance(0.5)) {
      const Ks = this.param('Ks', this.uniform(0.5, 1.5), '', 'K_s')
      return this.block('S', { role: 'sensor', label: 'Transmitter gain', num: Ks, den: '1' })
    }
    const Ts = this.param('Ts', this.logUniform(0.05, 0.5), 's', 'T_s')
    return this.block('S', { role: 'sensor', label: 'Transmitter lag', num: '1', den: `${Ts}*s + 1` })
  }

  /** A forward path of n process elements after a controller. */
  forward(n: number, gainScale: number, allowDelay: boolean): RandomNode {
    const parts: RandomNode[] = [this.controller(gainScale)]
    if (this.chance(0.4)) {
      const Ta = this.param('Tv', this.logUniform(0.1, 1), 's', 'T_v')
      parts.push(this.block('A', { role: 'actuator', label: 'Valve', num: '1', den: `${Ta}*s + 1` }))
    }
    for (let i = 0; i < n; i++) parts.push(this.plant(allowDelay))
    return { series: parts }
  }

  /** Two process paths summed with signs; the subtracted one is the weaker, so the DC gain stays positive. */
  parallelPlant(): RandomNode {
    const a = this.plant(false)
    const T = this.param('Tq', this.logUniform(0.5, 5), 's', 'T_q')
    const k = this.param('Kq', this.uniform(0.1, 0.4), '', 'K_q')
    const b = this.block('Q', { role: 'plant', label: 'Side path', num: k, den: `${T}*s + 1` })
    return { parallel: [a, b], signs: [1, this.chance(0.5) ? 1 : -1] }
  }
}

type Shape = 'single' | 'return' | 'parallel' | 'cascade' | 'positive-inner' | 'positive-outer' | 'outer-series' | 'feedforward' | 'triple-cascade'

/** One random loop file. */
export function randomLoop(rnd: () => number, index: number): RandomLoopFile {
  const b = new LoopBuilder(rnd)
  const shape: Shape = b.pick([
    'single', 'single', 'return', 'return', 'parallel', 'cascade', 'cascade',
    'positive-inner', 'positive-outer', 'outer-series', 'feedforward', 'triple-cascade',
  ])
  // Higher order loops need lower gain to be stable as often as not.
  const n = 1 + Math.floor(rnd() * 4)
  const gainScale = 1 / n
  let structure: RandomNode
  switch (shape) {
    case 'single':
      structure = { feedback: { forward: b.forward(n, gainScale, true), return: null, sign: -1 } }
      break
    case 'return':
      structure = { feedback: { forward: b.forward(n, gainScale, true), return: b.sensor(), sign: -1 } }
      break
    case 'parallel':
      structure = {
        feedback: { forward: { series: [b.controller(gainScale), b.parallelPlant()] }, return: b.chance(0.5) ? b.sensor() : null, sign: -1 },
      }
      break
    case 'cascade':
    case 'triple-cascade': {
      let inner: RandomNode = { feedback: { forward: b.forward(1, 1, false), return: b.chance(0.3) ? b.sensor() : null, sign: -1 } }
      if (shape === 'triple-cascade') inner = { feedback: { forward: { series: [b.controller(0.5), inner, b.plant(false)] }, return: null, sign: -1 } }
      structure = {
        feedback: { forward: { series: [b.controller(gainScale), inner, ...Array.from({ length: Math.max(1, n - 1) }, () => b.plant(true))] }, return: b.chance(0.4) ? b.sensor() : null, sign: -1 },
      }
      break
    }
    case 'positive-inner': {
      // A weak positive feedback around a lag (a regenerative element), inside a negative loop.
      const lag = b.plant(false)
      const kf = b.param('Kf', b.uniform(0.1, 0.6), '', 'K_f')
      const fbk = b.block('F', { role: 'other', label: 'Regenerative path', num: kf, den: '1' })
      structure = {
        feedback: { forward: { series: [b.controller(gainScale), { feedback: { forward: lag, return: fbk, sign: 1 } }] }, return: null, sign: -1 },
      }
      break
    }
    case 'positive-outer': {
      // Positive feedback: stable only when the loop gain stays below one.
      const g = b.param('Kg', b.uniform(0.2, 1.6), '', 'K_g')
      const P = b.plant(false)
      const G = b.block('G', { role: 'other', label: 'Loop gain', num: `${g}/2`, den: '1' })
      structure = { feedback: { forward: { series: [G, P] }, return: b.chance(0.5) ? b.sensor() : null, sign: 1 } }
      break
    }
    case 'outer-series': {
      // A closed loop followed by a measurement lag: no outermost feedback node.
      const loop: RandomNode = { feedback: { forward: b.forward(n, gainScale, false), return: null, sign: -1 } }
      if (b.chance(0.5)) {
        // Two identical filters sharing one time constant: an exact double pole of T(s).
        const Tf = b.param('Tf', b.logUniform(0.1, 1), 's', 'T_f')
        const f1 = b.block('M', { role: 'sensor', label: 'Filter', num: '1', den: `${Tf}*s + 1` })
        const f2 = b.block('M', { role: 'sensor', label: 'Filter', num: '1', den: `${Tf}*s + 1` })
        structure = { series: [loop, f1, f2] }
      } else if (b.chance(0.3)) {
        // A totaliser after the loop: a pole exactly at the origin, so T(s) is marginal.
        const tot = b.block('I', { role: 'other', label: 'Totaliser', num: '1', den: 's' })
        structure = { series: [loop, tot] }
      } else structure = { series: [loop, b.sensor()] }
      break
    }
    case 'feedforward': {
      // A closed loop plus a feedforward path around it.
      const loop: RandomNode = { feedback: { forward: b.forward(Math.min(n, 3), gainScale, false), return: null, sign: -1 } }
      const Kff = b.param('Kff', b.uniform(0.1, 0.5), '', 'K_{ff}')
      const Tff = b.param('Tff', b.logUniform(0.5, 3), 's', 'T_{ff}')
      const ff = b.block('FF', { role: 'compensator', label: 'Feedforward', num: Kff, den: `${Tff}*s + 1` })
      structure = { parallel: [loop, ff], signs: [1, 1] }
      break
    }
  }
  const file: RandomLoopFile = {
    title: `Random loop ${index} (${shape})`,
    parameters: b.parameters,
    blocks: b.blocks,
    structure,
  }
  if (b.hasDelay) file.delay_approximation = { method: 'pade', order: 1 + Math.floor(rnd() * 3) }
  if (b.chance(0.3)) file.criteria = { phase_margin_deg: { min: 45 }, gain_margin_db: { min: 6 }, overshoot_pct: { max: 20 } }
  return file
}

export const RANDOM_LOOP_SEED = 20240611
export const RANDOM_LOOP_COUNT = 240

/** The fixed set every test uses: the same seed, so a failure names a loop that can be rerun. */
export function randomLoops(count = RANDOM_LOOP_COUNT, seed = RANDOM_LOOP_SEED): RandomLoopFile[] {
  const rnd = seededRandom(seed)
  return Array.from({ length: count }, (_, i) => randomLoop(rnd, i))
}
