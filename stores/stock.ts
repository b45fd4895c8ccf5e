import type { StockInput } from '#shared/schemas/maintenance'
import type { StockItem } from '#shared/types/maintenance'

/** The stock roster of one layout: each item with its running since its last service. */
export const useStockStore = defineStore('stock', () => {
  const layoutId = ref<number | null>(null)
  const items = ref<StockItem[]>([])
  const loadError = ref<string | null>(null)

  async function load(id: number) {
    layoutId.value = id
    loadError.value = null
    try {
      const r = await $fetch<{ items: StockItem[] }>(`/api/layouts/${id}/stock`)
      items.value = r.items
    } catch (e) {
      loadError.value = toApiError(e).message
    }
  }

  async function addItem(input: StockInput) {
    const id = layoutId.value!
    await $fetch(`/api/layouts/${id}/stock`, { method: 'POST', body: input })
    await load(id)
  }

  async function updateItem(itemId: number, input: StockInput) {
    await $fetch<{ id: number }>(`/api/stock/${itemId}`, { method: 'PUT', body: input })
    await load(layoutId.value!)
  }

  /** Removes the item with its service records; the list is read again (so it is gone for everyone). */
  async function removeItem(itemId: number) {
    const url: string = `/api/stock/${itemId}`
    const send = $fetch as (url: string, options: { method: 'DELETE' }) => Promise<{ deleted: number, services: number }>
    await send(url, { method: 'DELETE' })
    await load(layoutId.value!)
  }

  async function setDescription(itemId: number, description: string | null) {
    const body = { description }
    await $fetch<{ id: number }>(`/api/stock/${itemId}/description`, { method: 'PUT', body })
    await load(layoutId.value!)
  }

  async function recordService(itemId: number, note?: string) {
    const body = { note }
    await $fetch<{ id: number }>(`/api/stock/${itemId}/services`, { method: 'POST', body })
    await load(layoutId.value!)
  }

  const dueCount = computed(() => items.value.filter(i => i.state === 'due').length)

  return { layoutId, items, loadError, dueCount, load, addItem, updateItem, removeItem, setDescription, recordService }
})
