import { describe, expect, it } from 'vitest'
import { readExpression } from '../../shared/calc/expression'
import { LoopInputError } from '../../shared/calc/errors'
import { multinomialText, polynomialText } from './support/algebra'

const symbols = ['Kc', 'Ti', 'zeta', 'wn']
const scope = { symbols: new Map(symbols.map((s, i) => [s, i])), variables: symbols.length }
const read = (text: string, sAllowed = true) => readExpression(text, 'blocks.X.num', scope, { sAllowed })
const text = (t: string) => {
  const q = read(t)
  return { num: polynomialText(q.num, symbols), den: multinomialText(q.den, symbols) }
}

function refusal(t: string, sAllowed = true): LoopInputError {
  try {
    read(t, sAllowed)
  } catch (error) {
    expect(error).toBeInstanceOf(LoopInputError)
    return error as LoopInputError
  }
  throw new Error(`"${t}" was not refused`)
}

describe('block expressions read exactly', () => {
  it('collects a PI numerator in powers of s', () => {
    expect(text('Kc*(Ti*s + 1)')).toEqual({ num: '((1)*Kc**1)*s**0 + ((1)*Kc**1*Ti**1)*s**1', den: '(1)' })
  })

  it('keeps decimals and scientific numbers exact as written', () => {
    expect(text('0.1*s + 2.5e2 + 1e-3')).toEqual({ num: '((250001/1000))*s**0 + ((1/10))*s**1', den: '(1)' })
  })

  it('expands a power of a binomial (binomial coefficients, common practice)', () => {
    expect(text('(s + 1)^4').num).toBe('((1))*s**0 + ((4))*s**1 + ((6))*s**2 + ((4))*s**3 + ((1))*s**4')
  })

  it('expands the standard second-order denominator', () => {
    expect(text('s^2 + 2*zeta*wn*s + wn^2').num).toBe('((1)*wn**2)*s**0 + ((2)*zeta**1*wn**1)*s**1 + ((1))*s**2')
  })

  it('reads implicit multiplication and unary signs', () => {
    expect(text('-2s + +3').num).toBe('((3))*s**0 + ((-2))*s**1')
  })

  it('keeps a divisor of parameters beside the polynomial, never folding s into it', () => {
    expect(text('Kc/Ti*s')).toEqual({ num: '((1)*Kc**1)*s**1', den: '(1)*Ti**1' })
    expect(text('s/(2*Ti)^2')).toEqual({ num: '((1))*s**1', den: '(4)*Ti**2' })
    expect(text('Ti^-2')).toEqual({ num: '((1))*s**0', den: '(1)*Ti**2' })
  })

  it('folds numeric divisors into the coefficients', () => {
    expect(text('s/4 + 1/3')).toEqual({ num: '((1/3))*s**0 + ((1/4))*s**1', den: '(1)' })
  })
})

describe('block expressions refused with the field named', () => {
  const cases: Array<[string, RegExp]> = [
    ['s^', /^blocks\.X\.num: "s\^" is not a complete expression$/],
    ['s + * 2', /^blocks\.X\.num: "s \+ \* 2" cannot be read/],
    ['1/s', /negative power of s/],
    ['Kc/(s + 1)', /negative power of s/],
    ['s^-1', /negative power of s/],
    ['(s+1)^(-2)', /negative power of s/],
    ['1/(Kc - Kc)', /divides by zero/],
    ['Kx*s', /"Kx", which is not a defined parameter/],
    ['pi*s', /"pi", which is not a defined parameter/],
    ['sin(s)', /function sin\(\)/],
    ['exp(-Ti*s)', /function exp\(\)/],
    ['s^0.5', /not a whole number/],
    ['s^Kc', /exponent that is not a number/],
    ['s^100', /above the limit of 64/],
    ['3%', /holds "%"/],
    ['s!', /holds "!"/],
    ['[1, 2]', /holds "\["/],
    ['Kc == 1', /holds "="/],
    ['1e400', /not finite/],
  ]
  it.each(cases)('%s', (t, pattern) => {
    const error = refusal(t)
    expect(error.field).toBe('blocks.X.num')
    expect(error.message).toMatch(pattern)
    expect(error.message.startsWith('blocks.X.num: ')).toBe(true)
  })

  it('refuses s in a dead time', () => {
    expect(refusal('Ti*s', false).message).toMatch(/depends on s/)
  })
})
