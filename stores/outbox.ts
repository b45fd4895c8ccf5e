import type { OutboxView } from '#shared/types/mail'

/** The Outbox screen's messages, newest first. */
export const useOutboxStore = defineStore('outbox', () => {
  const messages = ref<OutboxView[]>([])
  const requestFetch = useRequestFetch()

  async function load() {
    messages.value = await requestFetch<OutboxView[]>('/api/outbox')
  }

  async function retry(id: number) {
    const { message } = await $fetch<{ message: OutboxView }>(`/api/outbox/${id}/retry`, { method: 'POST' })
    messages.value = messages.value.map(m => (m.id === id ? message : m))
  }

  // Plain refs (not readonly): Pinia restores server-rendered state only into refs it can write when the page hydrates.
  return { messages, load, retry }
})
