/**
 * The engine on the command line (calc-contract.md):
 *   npm run --silent calc -- FILE   → the result JSON on stdout, exit 0
 * A file that cannot be computed prints one line naming the field on stderr
 * and exits 2; a computation past its time limit says so and exits 3. Never a
 * stack trace.
 */
import { readFileSync } from 'node:fs'
import { CalcTimeoutError, LoopInputError, evaluateLoopText } from '../shared/calc/index'

function fail(message: string, code: number): never {
  process.stderr.write(`${message.replace(/\s*\n\s*/g, ' ')}\n`)
  process.exit(code)
}

const file = process.argv[2]
if (!file || process.argv.length > 3) fail('usage: npm run --silent calc -- FILE (one loop file)', 2)

let text: string
try {
  text = readFileSync(file, 'utf8')
} catch (error) {
  const code = (error as NodeJS.ErrnoException).code
  fail(`file: cannot read ${file}${code === 'ENOENT' ? ' (no such file)' : code === 'EISDIR' ? ' (a directory, not a file)' : code ? ` (${code})` : ''}`, 2)
}

try {
  const result = evaluateLoopText(text)
  process.stdout.write(`${JSON.stringify(result, null, 2)}\n`)
} catch (error) {
  if (error instanceof LoopInputError) fail(error.message, 2)
  if (error instanceof CalcTimeoutError) fail(error.message, 3)
  fail(`internal error of the engine: ${error instanceof Error ? error.message : String(error)}`, 1)
}
