import { existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, symlinkSync } from 'node:fs'
import { dirname, join, relative } from 'node:path'

/**
 * When two versions of one package end up in a Nitro build, the file tracer stores each under
 * `.output/server/node_modules/.nitro/<name>@<version>/` and links only one of them as
 * `node_modules/<name>`. A package that imports itself by name (`@noble/hashes` 1.x's
 * `import … from '@noble/hashes/crypto'`) then finds the linked version, not its own: the
 * built server failed to start (ERR_PACKAGE_PATH_NOT_EXPORTED) once pdfkit (@noble/hashes 1.x)
 * and pkijs (2.x) were both in it. Node resolves a bare import by walking up `node_modules`
 * folders, so a `node_modules/<name>` link inside each versioned folder, pointing back at that
 * folder, makes every copy find itself first. Returns the links made.
 */
export function linkNitroSelfReferences(serverDir: string): string[] {
  const store = join(serverDir, 'node_modules', '.nitro')
  if (!existsSync(store)) return []
  const folders: string[] = []
  for (const entry of readdirSync(store)) {
    if (entry.startsWith('@')) for (const inner of readdirSync(join(store, entry))) folders.push(join(store, entry, inner))
    else folders.push(join(store, entry))
  }
  const made: string[] = []
  for (const folder of folders) {
    const manifest = join(folder, 'package.json')
    if (!existsSync(manifest)) continue
    const { name } = JSON.parse(readFileSync(manifest, 'utf8')) as { name?: string }
    if (!name) continue
    const link = join(folder, 'node_modules', name)
    if (existsSync(link) || isLink(link)) continue
    mkdirSync(dirname(link), { recursive: true })
    symlinkSync(relative(dirname(link), folder), link, 'dir')
    made.push(link)
  }
  return made
}

function isLink(path: string) {
  try {
    return lstatSync(path).isSymbolicLink()
  }
  catch {
    return false
  }
}
