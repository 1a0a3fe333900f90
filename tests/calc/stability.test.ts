// The stability verdict at its edges. Source: Nise, "Control Systems Engineering", ch. 6 (from memory):
// simple poles on the imaginary axis give a marginally stable (sustained oscillation) response, repeated
// ones a response that grows as t·sin(ωt), i.e. unstable.
import { describe, expect, it } from 'vitest'
import { evaluateLoop } from '../../shared/calc/index'

function openChain(den: string) {
  return { parameters: {}, blocks: { G: { role: 'plant', label: 'test', num: '1', den } }, structure: 'G' }
}

describe('stability verdict', () => {
  it('calls simple poles on the axis marginal: (s + 2)(s² + 4)', () => {
    expect(evaluateLoop(openChain('(s + 2)*(s^2 + 4)')).stability).toBe('marginal')
  })

  it('calls repeated poles on the axis unstable and says why: (s² + 1)²', () => {
    const result = evaluateLoop(openChain('(s^2 + 1)^2'))
    expect(result.stability).toBe('unstable')
    expect(result.warnings.join(' ')).toMatch(/repeated pole on the imaginary axis/)
  })

  it('calls a double pole at the origin unstable: s²(s + 1)', () => {
    expect(evaluateLoop(openChain('s^2*(s + 1)')).stability).toBe('unstable')
  })

  it('calls a single pole at the origin marginal: s(s + 1)', () => {
    expect(evaluateLoop(openChain('s*(s + 1)')).stability).toBe('marginal')
  })
})
