// The app's one object store, from runtimeConfig.objectStore (NUXT_OBJECT_STORE_*; README.md, "Object storage").
import { createObjectStore, type ObjectStore } from '../services/object-store'

let store: ObjectStore | undefined

export function useObjectStore(): ObjectStore {
  if (!store) {
    const settings = useRuntimeConfig().objectStore
    store = createObjectStore({
      endpoint: String(settings.endpoint ?? ''),
      region: String(settings.region),
      bucket: String(settings.bucket),
      accessKeyId: String(settings.accessKeyId),
      secretAccessKey: String(settings.secretAccessKey),
      forcePathStyle: settings.forcePathStyle === true || String(settings.forcePathStyle) === 'true',
    })
  }
  return store
}
