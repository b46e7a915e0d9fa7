/**
 * Shares one database read among callers that all need a result at least as new as the moment
 * they asked. A read that is already under way may have started before a caller's own change
 * (a commit, or joining a room's channel), so it is never handed to later callers; instead they
 * share the next read, which starts as soon as the running one ends. Two hundred phones joining
 * a room at once then cost a handful of reads of its state instead of two hundred, and none of
 * them gets a state older than its own arrival.
 *
 * Per process; a failed read fails the callers that shared it (each can ask again).
 */
interface Slot {
  running: Promise<unknown> | null
  queued: Promise<unknown> | null
}

const slots = new Map<string, Slot>()

export function freshRead<T>(key: string, read: () => Promise<T>): Promise<T> {
  let slot = slots.get(key)
  if (!slot) {
    slot = { running: null, queued: null }
    slots.set(key, slot)
  }
  if (!slot.running) return start(key, slot, read)
  if (!slot.queued) {
    const after = slot.running
    const held = slot
    slot.queued = after.then(ignore, ignore).then(() => {
      held.queued = null
      return start(key, held, read)
    })
  }
  return slot.queued as Promise<T>
}

function start<T>(key: string, slot: Slot, read: () => Promise<T>): Promise<T> {
  const running: Promise<T> = read().finally(() => {
    if (slot.running !== running) return
    slot.running = null
    if (!slot.queued && slots.get(key) === slot) slots.delete(key)
  })
  slot.running = running
  return running
}

function ignore() {}
