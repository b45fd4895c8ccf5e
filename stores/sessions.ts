import type { StartSessionBody } from '#shared/schemas/session'
import type { SessionListItem } from '#shared/types/sessions'

export interface SessionFilters { layout: string, from: string, to: string, page: number }

/** The Sessions list and the two actions on it: start a session, end one. */
export const useSessionsStore = defineStore('sessions', () => {
  const filters = reactive<SessionFilters>({ layout: '', from: '', to: '', page: 1 })
  const sessions = ref<SessionListItem[]>([])
  const pages = ref(1)
  const total = ref(0)
  const loading = ref(false)
  const error = ref<string | null>(null)

  function query() {
    const q: Record<string, string | number> = { page: filters.page, limit: 20 }
    if (filters.layout) q.layout = filters.layout
    if (filters.from) q.from = new Date(`${filters.from}T00:00:00`).toISOString()
    if (filters.to) q.to = new Date(`${filters.to}T23:59:59.999`).toISOString()
    return q
  }

  async function load(fetcher: typeof $fetch = $fetch) {
    loading.value = true
    error.value = null
    try {
      const reply = await fetcher<{ sessions: SessionListItem[], pages: number, total: number }>('/api/sessions', { query: query() })
      sessions.value = reply.sessions
      pages.value = reply.pages
      total.value = reply.total
    } catch (e) {
      error.value = toApiError(e).message
    } finally {
      loading.value = false
    }
  }

  async function start(body: StartSessionBody): Promise<number> {
    const { id } = await $fetch<{ id: number }>('/api/sessions', { method: 'POST', body })
    await load()
    return id
  }

  async function end(id: number) {
    await $fetch(`/api/sessions/${id}/end`, { method: 'POST' })
    await load()
  }

  return { filters, sessions, pages, total, loading, error, load, start, end }
})
