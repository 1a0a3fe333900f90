/**
 * The engine on the command line (calc-contract.md):
 *   npm run --silent calc -- FILE   → the result JSON on stdout, exit 0
 * A file that cannot be computed prints one line naming the field on stderr
 * and exits 2; a computation past its time limit says so and exits 3. Never a
 * stack trace. `--deadline-ms=N` after the file sets the time limit.
 */
import { readFileSync } from 'node:fs'
import { CalcTimeoutError, LoopInputError, evaluateLoopText } from '../shared/calc/index'

function fail(message: string, code: number): never {
  process.stderr.write(`${message.replace(/\s*\n\s*/g, ' ')}\n`)
  process.exit(code)
}

// `--deadline-ms=N` sets the time limit (default 10 000 ms), for tests and heavy loops.
const args = process.argv.slice(2)
const limit = args.find((a) => a.startsWith('--deadline-ms='))
const files = args.filter((a) => a !== limit)
const deadlineMs = limit ? Number(limit.slice('--deadline-ms='.length)) : undefined
if (deadlineMs !== undefined && !(deadlineMs > 0)) fail('usage: --deadline-ms=N takes a positive number of milliseconds', 2)
const file = files[0]
if (!file || files.length > 1) fail('usage: npm run --silent calc -- FILE [--deadline-ms=N] (one loop file)', 2)

let text: string
try {
  text = readFileSync(file, 'utf8')
} catch (error) {
  const code = (error as NodeJS.ErrnoException).code
  fail(`file: cannot read ${file}${code === 'ENOENT' ? ' (no such file)' : code === 'EISDIR' ? ' (a directory, not a file)' : code ? ` (${code})` : ''}`, 2)
}

try {
  const result = evaluateLoopText(text, { deadlineMs })
  process.stdout.write(`${JSON.stringify(result, null, 2)}\n`)
} catch (error) {
  if (error instanceof LoopInputError) fail(error.message, 2)
  if (error instanceof CalcTimeoutError) fail(error.message, 3)
  fail(`internal error of the engine: ${error instanceof Error ? error.message : String(error)}`, 1)
}
