import type { SiteRole } from '../roles'

declare module '#auth-utils' {
  interface User {
    id: string
    email: string
    displayName: string
    siteRole: SiteRole
  }
}

export {}
