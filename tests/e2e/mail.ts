import { readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'

/** The invitation link in the newest message the mail catcher (MAIL_DIR, set by npm test) holds for `address`. */
export function invitationLinkFor(address: string) {
  const dir = process.env.MAIL_DIR
  if (!dir) throw new Error('MAIL_DIR is not set: npm test starts the mail catcher and sets it')
  const message = readdirSync(dir).filter(name => name.endsWith('.json')).sort().reverse()
    .map(name => JSON.parse(readFileSync(join(dir, name), 'utf8')) as { to: string[], text: string })
    .find(m => m.to.includes(address))
  return message && /(https?:\/\/\S+\/invitations\/[\w-]{43})/.exec(message.text)?.[1]
}
