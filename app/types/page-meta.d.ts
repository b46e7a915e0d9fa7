declare module '#app' {
  interface PageMeta {
    /** Reachable without signing in. */
    public?: boolean
    /** Only for site administrators. */
    admin?: boolean
  }
}

export {}
