import type { SiteRole } from '../roles'

declare module '#auth-utils' {
  interface User {
    id: string
    email: string
    displayName: string
    siteRole: SiteRole
  }
  interface UserSession {
    /** The account's session epoch when this session was made (see server/utils/sessions.ts). */
    epoch?: number
    loggedInAt?: number
  }
}

export {}
