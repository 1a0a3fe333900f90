/**
 * Seeded high-order nested loops for the reference tests: an outer loop whose
 * forward path holds an inner loop closed around its own controller, actuator
 * and process element, then further process elements, so that L(s) of the
 * outer loop is of seventh to twelfth order. Some carry a dead time in the
 * outer process (L = R(s)·e^(−sθ) exactly), some inside the inner loop (L
 * known exactly only through its value at jω), the rest none. Time constants
 * and natural frequencies are spread over two decades, as a plant with a fast
 * inner flow loop and slow outer process elements has them; those spreads are
 * what make the polynomials whose roots are the crossovers ill-conditioned.
 * Same builder as random-loops.ts, its own seed.
 */
import { LoopBuilder, type RandomLoopBlock, type RandomLoopFile, type RandomNode, seededRandom } from './random-loops'

export type DelayPlace = 'none' | 'outer' | 'inner'

/** The denominator degree of each element kind. */
const KIND_ORDER = { lag: 1, second: 2, lags2: 2 } as const
type Kind = keyof typeof KIND_ORDER

function element(b: LoopBuilder, kind: Kind, slow: boolean, delay: boolean): string {
  // Outer process elements are slow (1 to 20 s), the inner loop's fast (0.05 to 1 s).
  const T = () => b.param('T', slow ? b.logUniform(1, 20) : b.logUniform(0.05, 1), 's', 'T')
  const K = b.param('Kp', b.logUniform(0.5, 2), '', 'K_p')
  let block: RandomLoopBlock
  if (kind === 'lag') block = { role: 'plant', label: 'First-order lag', num: K, den: `${T()}*s + 1` }
  else if (kind === 'lags2') block = { role: 'plant', label: 'Two lags', num: K, den: `(${T()}*s + 1)*(${T()}*s + 1)` }
  else {
    const w = b.param('wn', slow ? b.logUniform(0.05, 1) : b.logUniform(1, 20), 'rad/s', '\\omega_n')
    const z = b.param('zeta', b.uniform(0.2, 0.9), '', '\\zeta')
    block = { role: 'plant', label: 'Second-order element', num: `${K}*${w}^2`, den: `s^2 + 2*${z}*${w}*s + ${w}^2` }
  }
  if (delay) {
    block.delay = b.param('L', slow ? b.logUniform(0.2, 3) : b.logUniform(0.02, 0.2), 's', '\\theta')
    b.hasDelay = true
  }
  return b.block('P', block)
}

/** One nested loop of L-order between 7 and 12, with its dead time where `place` says. */
export function nestedLoop(rnd: () => number, index: number, place: DelayPlace): RandomLoopFile & { order: number } {
  const b = new LoopBuilder(rnd)
  let order = 0
  // Inner loop: PI controller (1), valve (1), one fast element (1 or 2), sensor lag (0 or 1).
  const innerKc = b.param('Kc', b.logUniform(0.5, 4), '', 'K_c')
  const innerTi = b.param('Ti', b.logUniform(0.2, 2), 's', 'T_i')
  const inner: RandomNode[] = [
    b.block('C', { role: 'controller', label: 'Inner PI', num: `${innerKc}*(${innerTi}*s + 1)`, den: `${innerTi}*s` }),
    b.block('A', { role: 'actuator', label: 'Valve', num: '1', den: `${b.param('Tv', b.logUniform(0.05, 0.5), 's', 'T_v')}*s + 1` }),
  ]
  order += 2
  const innerKind = b.pick<Kind>(['lag', 'second'])
  inner.push(element(b, innerKind, false, place === 'inner'))
  order += KIND_ORDER[innerKind]
  let innerReturn: string | null = null
  if (b.chance(0.5)) {
    innerReturn = b.block('S', { role: 'sensor', label: 'Inner transmitter lag', num: '1', den: `${b.param('Ts', b.logUniform(0.02, 0.2), 's', 'T_s')}*s + 1` })
    order += 1
  }
  // Outer controller: PI (1) or PID with derivative filter (2), gain spread so that some loops are unstable.
  const Kc = b.param('Kc', b.logUniform(0.05, 3), '', 'K_c')
  const Ti = b.param('Ti', b.logUniform(5, 60), 's', 'T_i')
  let outerController: string
  if (b.chance(0.5)) {
    outerController = b.block('C', { role: 'controller', label: 'Outer PI', num: `${Kc}*(${Ti}*s + 1)`, den: `${Ti}*s` })
    order += 1
  } else {
    const Td = b.param('Td', b.logUniform(0.5, 5), 's', 'T_d')
    outerController = b.block('C', { role: 'controller', label: 'Outer PID', num: `${Kc}*(${Ti}*${Td}*s^2 + ${Ti}*s + 1)`, den: `${Ti}*s*(0.1*${Td}*s + 1)` })
    order += 2
  }
  // Outer process elements until the order reaches the target.
  const target = 7 + Math.floor(rnd() * 6)
  const outer: RandomNode[] = [outerController, { feedback: { forward: { series: inner }, return: innerReturn, sign: -1 } }]
  let delayed = place !== 'outer'
  while (order < target) {
    const room = target - order
    const kind = b.pick<Kind>(room >= 2 ? ['lag', 'second', 'lags2'] : ['lag'])
    outer.push(element(b, kind, true, !delayed))
    delayed = true
    order += KIND_ORDER[kind]
  }
  const file: RandomLoopFile & { order: number } = {
    title: `Nested loop ${index} (order ${order}, dead time ${place})`,
    parameters: b.parameters,
    blocks: b.blocks,
    structure: { feedback: { forward: { series: outer }, return: null, sign: -1 } },
    order,
  }
  if (b.hasDelay) file.delay_approximation = { method: 'pade', order: 1 + Math.floor(rnd() * 3) }
  return file
}

export const NESTED_LOOP_SEED = 20261201
export const NESTED_LOOP_COUNT = 60

/** The fixed set: a third each without dead time, with one in the outer process, with one inside the inner loop. */
export function nestedLoops(count = NESTED_LOOP_COUNT, seed = NESTED_LOOP_SEED): Array<RandomLoopFile & { order: number }> {
  const rnd = seededRandom(seed)
  const places: DelayPlace[] = ['none', 'outer', 'inner']
  return Array.from({ length: count }, (_, i) => nestedLoop(rnd, i, places[i % 3]!))
}
