// The local fake of S3-compatible object storage: s3rver (npm) on loopback, path-style addressing, its files under
// .data/object-store/<port>/, the named buckets created at start. Its one account is s3rver's own: access key and
// secret `S3RVER`. Run by scripts/object-store; not part of the app, which talks to any S3-compatible store through
// @aws-sdk/client-s3 (server/utils/object-store.ts).
import { mkdir } from 'node:fs/promises'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import S3rver from 's3rver'

const { values } = parseArgs({
  options: {
    port: { type: 'string', default: '4568' },
    dir: { type: 'string' },
    bucket: { type: 'string', multiple: true, default: ['loopwright'] },
  },
})
const port = Number(values.port)
const directory = values.dir ?? join(process.cwd(), '.data', 'object-store', String(port))
await mkdir(directory, { recursive: true })

const server = new S3rver({
  address: '127.0.0.1',
  port,
  directory,
  silent: true,
  // Path-style only (http://127.0.0.1:4568/<bucket>/<key>): no bucket names in host names on loopback.
  vhostBuckets: false,
  configureBuckets: values.bucket.map((name) => ({ name, configs: [] })),
})
await server.run()
console.log(`object store: http://127.0.0.1:${port}, buckets ${values.bucket.join(', ')}, files in ${directory}`)

for (const signal of ['SIGTERM', 'SIGINT'] as const) {
  process.on(signal, () => {
    server.close().then(() => process.exit(0), () => process.exit(0))
    setTimeout(() => process.exit(0), 2000).unref()
  })
}
