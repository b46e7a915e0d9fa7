/**
 * The minutes PDF embeds Nunito. Its two files travel inside the server build as Nitro server
 * assets (`serverAssets` in nuxt.config.ts), so a deployed `.output` needs no node_modules
 * (tests/server/deployment.test.ts); this hands server/utils/minutesPdf.ts the way to read them.
 */
import { setNunitoAssetLoader } from '../utils/minutesPdf'

export default defineNitroPlugin(() => {
  const store = useStorage('assets:nunito')
  setNunitoAssetLoader(async (name) => {
    const bytes = await store.getItemRaw(name)
    if (!bytes) return null
    return bytes instanceof Uint8Array ? bytes : new Uint8Array(bytes as ArrayBuffer)
  })
})
