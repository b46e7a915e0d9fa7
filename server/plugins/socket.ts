import { createAdapter } from '@socket.io/postgres-adapter'
import { Server as Engine } from 'engine.io'
import { ServerResponse } from 'node:http'
import pg from 'pg'
import { Server } from 'socket.io'
import { createEvent, defineEventHandler } from 'h3'
import type { RealtimeServer } from '../utils/realtime'
import type { HandshakeRefusal } from '../../shared/types/realtime'

/**
 * socket.io inside Nitro (in `nuxt dev` and in the built server alike): an engine.io Engine handles
 * /socket.io/ for long-polling and, through Nitro's websocket support, for websockets. Several
 * processes share events through @socket.io/postgres-adapter on the app's own database.
 */
export default defineNitroPlugin((nitroApp) => {
  const engine = new Engine({ pingInterval: 10_000, pingTimeout: 8_000, maxHttpBufferSize: 64 * 1024 })
  const io: RealtimeServer = new Server({ serveClient: false })
  io.bind(engine)

  if (process.env.DATABASE_URL) {
    const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 3 })
    pool.on('error', error => console.error('[realtime] adapter pool error:', error.message))
    // The adapter keeps one client checked out for LISTEN and gives it no 'error' listener: a
    // database restart would be an uncaught exception. It reconnects by itself on 'end'.
    pool.on('connect', client => client.on('error', error => console.error('[realtime] adapter client error:', error.message)))
    io.adapter(createAdapter(pool, {
      // 0.5.0 silently drops a NOTIFY payload of exactly 8000 bytes; larger ones go through the table.
      payloadThreshold: 7999,
      errorHandler: error => console.error('[realtime] adapter error:', error?.message ?? error),
    }))
  }

  // Authenticate once, at the handshake, from the session cookie; sign-out disconnects the user's sockets.
  io.use(async (socket, next) => {
    let session: Awaited<ReturnType<typeof getUserSession>>
    let account: Awaited<ReturnType<typeof currentSessionAccount>>
    try {
      const event = createEvent(socket.request, new ServerResponse(socket.request))
      // Nitro's own request handler sets this context; the session helpers read the runtime
      // config through it. Without it, a fresh process refused every socket until its first page.
      event.context.nitro = { errors: [] }
      session = await getUserSession(event)
      // A session ended by a password change elsewhere is refused like no session at all.
      account = await currentSessionAccount(session)
    }
    catch (error) {
      console.error('[realtime] handshake could not read the session:', (error as Error).message)
      return next(handshakeError('The server could not check your sign-in; trying again.', 'unavailable'))
    }
    if (!session.user || !account) return next(handshakeError('Sign in first.', 'signed-out'))
    socket.data.userId = session.user.id
    socket.data.displayName = session.user.displayName
    socket.data.rooms = new Map()
    await socket.join(userChannel(session.user.id))
    next()
  })
  io.on('connection', registerSocketHandlers)
  setRealtime(io)

  nitroApp.router.use('/socket.io/', defineEventHandler({
    handler(event) {
      engine.handleRequest(event.node.req, event.node.res)
      event._handled = true
    },
    websocket: {
      open(peer) {
        // Private fields of crossws ≥ 0.3 (see INTEGRATION.md); an end-to-end test keeps this honest.
        const internal = (peer as unknown as { _internal: { nodeReq: import('node:http').IncomingMessage } })._internal
        const engineInternals = engine as unknown as { prepare: (req: unknown) => void, onWebSocket: (req: unknown, socket: unknown, ws: unknown) => void }
        engineInternals.prepare(internal.nodeReq)
        engineInternals.onWebSocket(internal.nodeReq, internal.nodeReq.socket, (peer as unknown as { websocket: unknown }).websocket)
      },
    },
  }))

  nitroApp.hooks.hook('close', async () => {
    await io.close()
  })
})

/** A refused handshake; `data.reason` tells the client whether signing in again would help. */
function handshakeError(message: string, reason: HandshakeRefusal) {
  return Object.assign(new Error(message), { data: { reason } })
}
