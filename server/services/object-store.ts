// Attachments' bytes in S3-compatible object storage through the hosted service's own SDK (@aws-sdk/client-s3):
// locally the fake of scripts/object-store (s3rver), elsewhere real S3 or any compatible store, by configuration only
// (runtimeConfig.objectStore; server/utils/object-store.ts builds the app's one store from it).
import { DeleteObjectCommand, GetObjectCommand, NoSuchKey, PutObjectCommand, S3Client } from '@aws-sdk/client-s3'

export interface ObjectStoreSettings {
  /** Empty: the hosted service's own endpoint for the region. */
  endpoint: string
  region: string
  bucket: string
  accessKeyId: string
  secretAccessKey: string
  /** http://host/bucket/key rather than http://bucket.host/key: what a store on loopback needs. */
  forcePathStyle: boolean
}

export interface ObjectStore {
  put(key: string, bytes: Buffer, type: string): Promise<void>
  /** The object's bytes; null when there is no such object. */
  get(key: string): Promise<Buffer | null>
  /** Removes the object; removing one that is not there is no error (S3's own rule). */
  remove(key: string): Promise<void>
}

export function createObjectStore(settings: ObjectStoreSettings): ObjectStore {
  const client = new S3Client({
    region: settings.region,
    ...(settings.endpoint ? { endpoint: settings.endpoint } : {}),
    forcePathStyle: settings.forcePathStyle,
    credentials: { accessKeyId: settings.accessKeyId, secretAccessKey: settings.secretAccessKey },
    // A store that does not answer fails the upload in seconds, not after the SDK's default retries and backoff.
    maxAttempts: 2,
    requestHandler: { connectionTimeout: 3_000, requestTimeout: 30_000 },
  })
  const Bucket = settings.bucket
  return {
    async put(key, bytes, type) {
      await client.send(new PutObjectCommand({ Bucket, Key: key, Body: bytes, ContentType: type, ContentLength: bytes.length }))
    },
    async get(key) {
      try {
        const answer = await client.send(new GetObjectCommand({ Bucket, Key: key }))
        if (!answer.Body) return null
        return Buffer.from(await answer.Body.transformToByteArray())
      } catch (error) {
        if (error instanceof NoSuchKey) return null
        throw error
      }
    },
    async remove(key) {
      await client.send(new DeleteObjectCommand({ Bucket, Key: key }))
    },
  }
}
