import type { Ref } from 'vue'
import { useLocalStorage } from '@vueuse/core'
import type { BallotChoice, MyBallot, VoteView } from '~~/shared/types/resolution'
import type { useRoomSocket } from '~/composables/useRoomSocket'

/** A ballot made on this phone and not yet acknowledged by the server. */
export interface PendingBallot {
  voteId: string
  idempotencyKey: string
  choices: Record<string, BallotChoice>
  madeAt: string
}

export type BallotState = 'incomplete' | 'unsent' | 'changed' | 'sending' | 'queued' | 'confirmed' | 'refused' | 'closed'

/** An idempotency key, made once per ballot. Works outside secure contexts (no randomUUID). */
export function newBallotKey(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(16))
  return `ballot-${Array.from(bytes, b => b.toString(16).padStart(2, '0')).join('')}`
}

export const sameChoices = (a: Record<string, BallotChoice> | null | undefined, b: Record<string, BallotChoice> | null | undefined) =>
  !!a && !!b && Object.keys(a).length === Object.keys(b).length && Object.entries(a).every(([id, c]) => b[id] === c)

/**
 * A stakeholder's ballot in the open final vote, as the phone keeps it: the choices being made,
 * and a ballot that survives going offline and reloading (kept in local storage per room and vote,
 * sent once the socket is back — or over HTTP when the socket cannot connect; the idempotency key
 * keeps a resend from counting twice). One ballot in flight at a time.
 */
export function useBallot(options: {
  roomId: string
  vote: Ref<VoteView | null>
  mine: Ref<MyBallot | null>
  live: Ref<ReturnType<typeof useRoomSocket> | null>
}) {
  const { vote, mine, live } = options
  const stored = useLocalStorage<{ pending: PendingBallot | null }>(
    () => `counterpoise:ballot:${options.roomId}:${vote.value?.id ?? 'none'}`,
    { pending: null },
    { writeDefaults: false, initOnMounted: true, mergeDefaults: true },
  )
  const choices = ref<Record<string, BallotChoice>>({})
  const sending = ref(false)
  const refusal = ref<string | null>(null)
  const online = useOnline()

  const mineHere = computed(() => (mine.value && mine.value.voteId === vote.value?.id ? mine.value : null))
  const pendingHere = computed(() => (stored.value.pending?.voteId === vote.value?.id ? stored.value.pending : null))
  const complete = computed(() => !!vote.value && vote.value.shortlist.every(id => choices.value[id]))

  /** The newest of: the unsent ballot, the stored one. */
  function restore() {
    const source = pendingHere.value?.choices ?? mineHere.value?.choices ?? {}
    choices.value = { ...source }
  }
  watch(() => vote.value?.id, restore, { immediate: true })
  onMounted(restore)
  let touched = false
  watch(mineHere, (m) => {
    if (m && !touched && !pendingHere.value) choices.value = { ...m.choices }
  })

  function choose(alternativeId: string, choice: BallotChoice) {
    choices.value = { ...choices.value, [alternativeId]: choice }
    touched = true
    refusal.value = null
  }

  const state = computed<BallotState>(() => {
    if (pendingHere.value) return sending.value ? 'sending' : 'queued'
    if (refusal.value) return 'refused'
    if (vote.value?.status !== 'open') return 'closed'
    if (mineHere.value) return sameChoices(mineHere.value.choices, choices.value) ? 'confirmed' : complete.value ? 'changed' : 'incomplete'
    return complete.value ? 'unsent' : 'incomplete'
  })
  const canSend = computed(() => {
    if (vote.value?.status !== 'open' || !complete.value) return false
    if (pendingHere.value) return !sameChoices(pendingHere.value.choices, choices.value)
    return !sameChoices(mineHere.value?.choices, choices.value)
  })

  /** Keep the ballot first (so nothing is lost), then send it when the connection allows. */
  function send() {
    if (!vote.value || !canSend.value) return
    refusal.value = null
    const ballot = Object.fromEntries(vote.value.shortlist.map(id => [id, choices.value[id]!]))
    stored.value = { pending: { voteId: vote.value.id, idempotencyKey: newBallotKey(), choices: ballot, madeAt: new Date().toISOString() } }
    void flush()
  }

  let retry: ReturnType<typeof setTimeout> | undefined
  const retryLater = () => {
    clearTimeout(retry)
    retry = setTimeout(() => void flush(), 4000)
  }
  onScopeDispose(() => clearTimeout(retry))
  // A ballot kept from before a reload, while the socket cannot connect: try over HTTP after a while.
  onMounted(() => retryLater())

  type Answer = { ok: true, data: MyBallot } | { ok: false, status: number, message: string }
  async function deliver(pending: PendingBallot): Promise<Answer | null> {
    const socket = live.value
    const body = { idempotencyKey: pending.idempotencyKey, choices: pending.choices }
    if (socket && socket.connection.value === 'connected') {
      try {
        return await socket.castBallot({ roomId: options.roomId, voteId: pending.voteId, ...body })
      }
      catch {
        return null
      }
    }
    // The socket cannot connect but the network is there: the same ballot over HTTP.
    try {
      const ballot = await $fetch<MyBallot>(`/api/rooms/${options.roomId}/votes/${pending.voteId}/ballot`, { method: 'PUT', body })
      if (socket) socket.myBallot.value = ballot
      mine.value = ballot
      return { ok: true, data: ballot }
    }
    catch (error) {
      const e = error as { statusCode?: number, data?: { message?: string } }
      if (!e.statusCode) return null
      return { ok: false, status: e.statusCode, message: e.data?.message ?? 'Refused.' }
    }
  }

  /** Send the kept ballot, once at a time, until none is left or the connection is gone. */
  async function flush() {
    if (sending.value || !import.meta.client) return
    for (;;) {
      const pending = stored.value.pending
      if (!pending || !navigator.onLine) return
      sending.value = true
      let answer: Answer | null
      try {
        answer = await deliver(pending)
      }
      finally {
        sending.value = false
      }
      const stillThisOne = stored.value.pending?.idempotencyKey === pending.idempotencyKey
      if (answer === null || (!answer.ok && (answer.status === 429 || answer.status >= 500))) {
        retryLater()
        return
      }
      if (stillThisOne) stored.value = { pending: null }
      if (!answer.ok) {
        if (stillThisOne) refusal.value = answer.message
        return
      }
      mine.value = answer.data
    }
  }

  // Send a kept ballot as soon as the connection is back (and after a reload).
  watch(() => live.value?.connection.value, (now) => {
    if (now === 'connected') void flush()
  })
  watch(online, (isOnline) => {
    if (isOnline) void flush()
  })
  watch(live, (socket) => {
    socket?.onJoined(({ myBallot }) => {
      // An acknowledgement lost with the connection: the server already holds this key.
      const pending = stored.value.pending
      if (pending && myBallot && myBallot.idempotencyKey === pending.idempotencyKey) {
        stored.value = { pending: null }
        mine.value = myBallot
      }
      void flush()
    })
  }, { immediate: true })

  return { choices, choose, state, canSend, send, refusal, pending: pendingHere, mine: mineHere, complete, flush }
}
