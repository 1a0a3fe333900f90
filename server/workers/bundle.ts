import { join } from 'node:path'
import { build } from 'esbuild'

/**
 * Bundles the calculation worker into one self-contained file beside the
 * server's output. Nitro bundles only what the routes import, and a worker
 * thread needs a file of its own to start from.
 */
export async function bundleCalcWorker(rootDir: string, outDirs: string[]): Promise<void> {
  for (const outDir of outDirs) {
    await build({
      entryPoints: [join(rootDir, 'server/workers/calc.ts')],
      outfile: join(outDir, 'calc-worker.mjs'),
      bundle: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      logLevel: 'warning',
      // CommonJS packages inside the bundle may require Node's own modules.
      banner: { js: "import { createRequire as __lwCreateRequire } from 'node:module'; const require = __lwCreateRequire(import.meta.url);" },
    })
  }
}
