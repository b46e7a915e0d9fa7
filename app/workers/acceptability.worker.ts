/**
 * SMAA-2 acceptability off the page's thread: the page posts the option table and the options,
 * the worker analyses the table, draws in chunks and posts progress between them, then the result.
 * A new request cancels the one under way (its later chunks are never drawn). The work itself is
 * acceptabilityRunner (tested on its own); this file only connects it to the worker's messages.
 */
import { acceptabilityRunner, type AcceptabilityMessage, type AcceptabilityRequest } from './acceptabilityRunner'

export type { AcceptabilityMessage, AcceptabilityRequest } from './acceptabilityRunner'

const handle = acceptabilityRunner({ post: (message: AcceptabilityMessage) => (self as unknown as Worker).postMessage(message) })

self.onmessage = (message: MessageEvent<AcceptabilityRequest>) => handle(message.data)
