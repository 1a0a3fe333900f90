import { spawn } from 'node:child_process'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { CalcTimeoutError, LoopInputError, evaluateLoopText } from '../../shared/calc/index'

/**
 * Every refusal of calc-contract.md ("Bad input"), and the engine's own, through
 * evaluateLoopText and through `npm run --silent calc -- FILE`: one message that
 * names the field, exit 2, never a stack trace.
 */
const base = () => ({
  title: 'Refusal case',
  parameters: { K: { value: 2, min: 1, max: 3 }, T: { value: 4 } },
  blocks: { G: { role: 'plant', num: 'K', den: 'T*s + 1' }, H: { role: 'sensor', num: '1' } },
  structure: { feedback: { forward: 'G', return: 'H', sign: -1 } },
})
type Loop = ReturnType<typeof base> & Record<string, any>
const edit = (change: (l: Loop) => void): string => {
  const loop = base() as Loop
  change(loop)
  return JSON.stringify(loop)
}

const manyBlocks = edit((l) => {
  l.blocks = Object.fromEntries(Array.from({ length: 65 }, (_, i) => [`B${i}`, { role: 'other', num: '1', den: 's + 1' }]))
  l.structure = { series: Object.keys(l.blocks) }
})
const highDegree = edit((l) => {
  l.blocks = Object.fromEntries(Array.from({ length: 21 }, (_, i) => [`B${i}`, { role: 'other', num: '1', den: 's^2 + s + 1' }]))
  l.structure = { feedback: { forward: { series: Object.keys(l.blocks) } } }
})
const huge = edit((l) => {
  l.parameters.K.note = 'x'.repeat(2000)
  for (let i = 0; i < 140; i++) l.parameters[`P${i}`] = { value: i, note: 'y'.repeat(1990) }
})

/** [what, loop file text, field, message]; the first 17 are the contract's own list and also go through the command line. */
const cases: Array<[string, string, string, RegExp?]> = [
  ['an unparsable expression', edit((l) => (l.blocks.G.den = 's^')), 'blocks.G.den', /"s\^" is not a complete expression/],
  ['1/s in a numerator', edit((l) => (l.blocks.G.num = '1/s')), 'blocks.G.num', /negative power of s/],
  ['a negative power of s in a denominator', edit((l) => (l.blocks.G.den = 's^-2 + 1')), 'blocks.G.den', /negative power of s/],
  ['an identically zero denominator', edit((l) => (l.blocks.G.den = 'T*s - s*T')), 'blocks.G.den', /identically zero/],
  ['a block named in structure but not defined', edit((l) => (l.structure.feedback.return = 'X')), 'structure.feedback.return', /block "X"/],
  ['a parameter used but not defined', edit((l) => (l.blocks.G.num = 'K*Kx')), 'blocks.G.num', /"Kx", which is not a defined parameter/],
  ['an unknown function', edit((l) => (l.blocks.G.num = 'exp(-T*s)')), 'blocks.G.num', /function exp/],
  ['a non-finite value', edit((l) => (l.parameters.T.value = 1)).replace('"value":1}', '"value":1e999}'), 'parameters.T.value', /finite/],
  ['a value that is not a number', edit((l) => (l.parameters.T.value = 'four')), 'parameters.T.value', /number/],
  ['min above max', edit((l) => (l.parameters.K.min = 5)), 'parameters.K.min', /min 5 is above max 3/],
  ['a value outside its band', edit((l) => (l.parameters.K.value = 9)), 'parameters.K.value', /above max 3/],
  ['a degree above 40 in a block', edit((l) => (l.blocks.G.den = '(s + 1)^41')), 'blocks.G.den', /degree 41/],
  ['a degree above 40 in the loop', highDegree, 'structure.feedback.forward', /degree 42/],
  ['more than 64 blocks', manyBlocks, 'blocks', /65 blocks, more than the limit of 64/],
  ['a file over 256 KiB', huge, 'file', /above the limit of 256 KiB/],
  ['text that is not JSON', '{"title": "half', 'file', /not valid JSON/],
  ['JSON that is not an object', '[1, 2]', 'file', /not a JSON object/],
  ['the symbol s as a parameter', edit((l) => (l.parameters.s = { value: 1 })), 'parameters.s', /Laplace variable/],
  ['a symbol starting with a digit', edit((l) => (l.parameters['2K'] = { value: 1 })), 'parameters.2K', /start with a letter/],
  ['a symbol with a hyphen', edit((l) => (l.parameters['K-1'] = { value: 1 })), 'parameters.K-1', /letters, digits and _/],
  ['an unknown criterion', edit((l) => (l.criteria = { bandwidth_hz: { min: 1 } })), 'criteria.bandwidth_hz', /not a known criterion/],
  ['a criterion with the wrong bound', edit((l) => (l.criteria = { phase_margin_deg: { max: 60 } })), 'criteria.phase_margin_deg.max', /takes a min limit/],
  ['a stability range of an undefined parameter', edit((l) => (l.analysis = { stability_range: { parameter: 'Q', search: [0, 1] } })), 'analysis.stability_range.parameter', /"Q" is not a defined parameter/],
  ['TeX that KaTeX cannot typeset', edit((l) => (l.parameters.K.tex = 'K_{c')), 'parameters.K.tex', /KaTeX cannot typeset/],
  ['a divisor zero at the values', edit((l) => ((l.parameters.T.value = 0), (l.blocks.G.num = '1/T'))), 'blocks.G.num', /zero at the parameters' values/],
  ['a negative dead time', edit((l) => (l.blocks.G.delay = '-T')), 'blocks.G.delay', /negative/],
  ['a dead time in s', edit((l) => (l.blocks.G.delay = 's')), 'blocks.G.delay', /depends on s/],
  ['a closed loop with a zero denominator', edit((l) => ((l.blocks.G = { role: 'plant', num: '1' }), (l.structure = { feedback: { forward: 'G', sign: 1 } }))), 'structure', /identically zero/],
  ['a missing structure', edit((l) => delete (l as Record<string, unknown>).structure), 'structure', /structure/],
  ['a Padé order that is not whole', edit((l) => (l.delay_approximation = { order: 1.5 })), 'delay_approximation.order', /whole number/],
]

const CONTRACT_CASES = 17

function refusal(text: string): LoopInputError {
  try {
    evaluateLoopText(text)
  } catch (error) {
    if (error instanceof LoopInputError) return error
    throw error
  }
  throw new Error('not refused')
}

const dir = mkdtempSync(join(tmpdir(), 'loopwright-refusals-'))

function runCli(args: string[]): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn('npm', ['run', '--silent', 'calc', '--', ...args], { cwd: join(__dirname, '../..') })
    let stdout = ''
    let stderr = ''
    child.stdout.on('data', (d) => (stdout += d))
    child.stderr.on('data', (d) => (stderr += d))
    child.on('close', (code) => resolve({ code, stdout, stderr }))
  })
}

describe('refusals through evaluateLoopText', () => {
  it.each(cases)('%s', (_, text, field, pattern) => {
    const error = refusal(text)
    expect(error.field).toBe(field)
    expect(error.message.startsWith(`${field}: `)).toBe(true)
    if (pattern) expect(error.message).toMatch(pattern)
  })

  it('stops a computation past its time limit and says so', () => {
    expect(() => evaluateLoopText(slowLoop, { deadlineMs: 50 })).toThrow(CalcTimeoutError)
    expect(() => evaluateLoopText(slowLoop, { deadlineMs: 50 })).toThrow(/did not finish within its time limit of 0.05 s/)
  })
})

/**
 * 14 lags, ten with a banded time constant (2^10 tolerance corners, the most allowed) and four numeric (14
 * symbolic ones would exceed the TeX limit), each corner with a step response: far beyond 50 ms.
 */
const slowLoop = edit((l) => {
  delete (l.parameters.K as { min?: number }).min
  delete (l.parameters.K as { max?: number }).max
  for (let i = 0; i < 14; i++) {
    if (i < 10) l.parameters[`a${i}`] = { value: 1, min: 0.9, max: 1.1 }
    l.blocks[`L${i}`] = { role: 'other', num: '1', den: i < 10 ? `a${i}*s + 1` : 's + 1' }
  }
  l.structure = { feedback: { forward: { series: Object.keys(l.blocks) } } }
      l.criteria = { overshoot_pct: { max: 10 } }
})

describe('refusals through the command line', () => {
  it('answers every case of the contract with exit 2 and one line naming the field', { timeout: 600_000 }, async () => {
    const cliCases = cases.slice(0, CONTRACT_CASES)
    const files = cliCases.map(([, text], i) => {
      const path = join(dir, `case-${i}.json`)
      writeFileSync(path, text)
      return path
    })
    const results: Array<Awaited<ReturnType<typeof runCli>>> = []
    // Two at a time: each run starts npm, tsx and mathjs (seconds on a loaded machine).
    for (let i = 0; i < files.length; i += 2) results.push(...(await Promise.all(files.slice(i, i + 2).map((f) => runCli([f])))))
    results.forEach((r, i) => {
      const [name, , field] = cliCases[i]
      expect({ name, code: r.code, stdout: r.stdout }).toEqual({ name, code: 2, stdout: '' })
      expect(r.stderr.trimEnd().split('\n')).toHaveLength(1)
      expect(r.stderr.startsWith(`${field}: `), `${name}: ${r.stderr}`).toBe(true)
      expect(r.stderr).not.toMatch(/\n\s+at /)
    })
  })

  it('says so and exits 3 when the time limit passes', { timeout: 120_000 }, async () => {
    const path = join(dir, 'slow.json')
    writeFileSync(path, slowLoop)
    const r = await runCli([path, '--deadline-ms=50'])
    expect(r.code).toBe(3)
    expect(r.stderr).toMatch(/^the calculation did not finish within its time limit of 0.05 s \(stopped during .+\)\n$/)
  })

  it('refuses a file it cannot read', { timeout: 120_000 }, async () => {
    const r = await runCli([join(dir, 'missing.json')])
    expect(r.code).toBe(2)
    expect(r.stderr).toMatch(/^file: cannot read .*missing\.json \(no such file\)\n$/)
  })

  it('prints the result of a good file on stdout with exit 0', { timeout: 120_000 }, async () => {
    const path = join(dir, 'good.json')
    writeFileSync(path, JSON.stringify(base()))
    const r = await runCli([path])
    expect(r.code).toBe(0)
    const result = JSON.parse(r.stdout)
    // T = K/(T s + 1 + K) = 2/(4 s + 3): den normalised to s + 0.75 (by hand).
    expect(result.closed_loop.den).toEqual([1, 0.75])
    expect(result.closed_loop.num).toEqual([0.5])
  })
})
