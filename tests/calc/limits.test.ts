// The limits on the work a loop file may ask for (shared/calc/limits.ts): each refused before the work,
// naming the field, through the engine and the command line; and the largest allowed still computes.
import { spawn } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { LoopInputError, evaluateLoopText } from '../../shared/calc/index'

/** n first-order lags in series behind a gain, unity feedback; `banded` of the time constants get a ±10 % band. */
function lags(n: number, banded = 0, extra: Record<string, unknown> = {}): string {
  const ids = Array.from({ length: n }, (_, i) => i)
  return JSON.stringify({
    parameters: {
      K: { value: 0.5 },
      ...Object.fromEntries(ids.map((i) => [`T${i}`, i < banded ? { value: 1 + 0.1 * i, min: 0.9 + 0.09 * i, max: 1.1 + 0.11 * i } : { value: 1 + 0.1 * i }])),
    },
    blocks: {
      K: { role: 'controller', num: 'K' },
      ...Object.fromEntries(ids.map((i) => [`G${i}`, { role: 'plant', num: '1', den: `T${i}*s + 1` }])),
    },
    structure: { feedback: { forward: { series: ['K', ...ids.map((i) => `G${i}`)] } } },
    ...extra,
  })
}

const oneBlock = (den: string, parameters: string[], extra: Record<string, unknown> = {}) =>
  JSON.stringify({
    parameters: Object.fromEntries(parameters.map((p) => [p, { value: 1 }])),
    blocks: { G: { role: 'plant', num: '1', den } },
    structure: { feedback: { forward: 'G' } },
    ...extra,
  })

/** [what, loop file, field, message]; each measured with the command line before the limit (see limits.ts). */
const cases: Array<[string, string, string, RegExp]> = [
  // calc-contract.md, `tolerance_corners`: at most 1,024; before: 2^20 corners ran to the 10 s time limit.
  ['twenty banded parameters (2^20 corners)', lags(20, 20), 'parameters', /20 parameters have a tolerance band: 1,048,576 tolerance corners, above the limit of 1,024/],
  ['eleven banded parameters (2,048 corners)', lags(11, 11), 'parameters', /2,048 tolerance corners/],
  // Before: ran past its time limit without stopping (the expansion of a power checked no deadline).
  ['a power of seven terms to the 40th', oneBlock('(a+b+c+d+e+f+s)^40', ['a', 'b', 'c', 'd', 'e', 'f']), 'blocks.G.den', /raises 7 terms to the power 40: about 57,015,420 term products/],
  ['a product of two large powers', oneBlock('(a+b+c+d+1)^8*(e+f+g+h+1)^8 + s', ['a', 'b', 'c', 'd', 'e', 'f', 'g', 'h']), 'blocks.G.den', /term products in one multiplication, above the limit of 200,000/],
  ['forty symbolic lags in series', lags(40), 'structure', /the reduction of the loop expands to about [\d,]+ term products/],
  ['sixteen symbolic lags (65,536 terms of TeX)', lags(16), 'structure', /typesets to about [\d,]+ characters of TeX, above the limit of 2,000,000/],
  [
    'a stability range whose Hurwitz determinant has degree 132',
    JSON.stringify({
      parameters: { K: { value: 1 } },
      blocks: { G: { role: 'plant', num: 'K^12', den: '(s+K)^12' } },
      structure: { feedback: { forward: 'G' } },
      analysis: { stability_range: { parameter: 'K', search: [0, 100] } },
    }),
    'analysis.stability_range.parameter',
    /degree 132 in K, above the limit of 120/,
  ],
  [
    // Before: an uncaught engine error (the API's 500): the determinant's coefficients overflow doubles.
    'a stability range that overflows double precision',
    JSON.stringify({
      parameters: { K: { value: 1 } },
      blocks: { C: { role: 'controller', num: 'K' }, G: { role: 'plant', num: '1', den: '(s+1)^40' } },
      structure: { feedback: { forward: { series: ['C', 'G'] } } },
      analysis: { stability_range: { parameter: 'K', search: [0, 100] } },
    }),
    'analysis.stability_range',
    /cannot be computed in double precision/,
  ],
]

describe('limits on the work a loop file asks for', () => {
  it.each(cases)('refuses %s naming the field', (_, text, field, pattern) => {
    let error: unknown
    try {
      evaluateLoopText(text)
    } catch (caught) {
      error = caught
    }
    expect(error).toBeInstanceOf(LoopInputError)
    expect((error as LoopInputError).field).toBe(field)
    expect((error as LoopInputError).message).toMatch(pattern)
  })

  it('computes ten banded parameters: 1,024 corners, the most the contract allows', () => {
    const result = evaluateLoopText(lags(10, 10), { deadlineMs: 120_000 })
    expect(result.tolerance_corners.count).toBe(1024)
    expect(result.tolerance_corners.parameters).toHaveLength(10)
  })

  it('computes a power just inside the term limit: (a+b+c+d+e+s)^8', () => {
    // 6 terms to the 8th: C(13, 5) = 1,287 terms (the multinomial count, by hand), 7,722 products in the last step.
    const result = evaluateLoopText(oneBlock('(a+b+c+d+e+s)^8', ['a', 'b', 'c', 'd', 'e']), { deadlineMs: 120_000 })
    expect(result.order.den).toBe(8)
    // At a = … = e = 1 the denominator is (s + 5)^8 + 1: its constant term 5^8 + 1 over the leading 1 (by hand).
    expect(result.closed_loop.den.at(-1)).toBeCloseTo(5 ** 8 + 1, 6)
  })
})

describe('limits through the command line', () => {
  it('exits 2 with one line naming parameters and the count for 2^20 corners', { timeout: 120_000 }, async () => {
    const dir = mkdtempSync(join(tmpdir(), 'loopwright-limits-'))
    const path = join(dir, 'corners.json')
    writeFileSync(path, lags(20, 20))
    const r = await new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
      const child = spawn('npm', ['run', '--silent', 'calc', '--', path], { cwd: join(__dirname, '../..') })
      let stdout = ''
      let stderr = ''
      child.stdout.on('data', (d) => (stdout += d))
      child.stderr.on('data', (d) => (stderr += d))
      child.on('close', (code) => resolve({ code, stdout, stderr }))
    })
    expect(r.code).toBe(2)
    expect(r.stdout).toBe('')
    expect(r.stderr).toMatch(/^parameters: 20 parameters have a tolerance band: 1,048,576 tolerance corners, above the limit of 1,024 .*\n$/)
  })
})
