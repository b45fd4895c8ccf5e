import type { LayoutSummary } from '#shared/types/layouts'

/** The Layouts screen's list, and the admin's changes to it (each change reloads the list from the server). */
export const useLayoutsStore = defineStore('layouts', () => {
  const layouts = ref<LayoutSummary[]>([])
  const loaded = ref(false)
  const requestFetch = useRequestFetch()

  async function load() {
    layouts.value = (await requestFetch<{ layouts: LayoutSummary[] }>('/api/layouts?archived=1')).layouts
    loaded.value = true
  }

  const bySlug = (slug: string) => layouts.value.find(l => l.slug === slug) ?? null

  async function create(body: { name: string, copyOf?: number }) {
    const made = await $fetch<{ id: number, slug: string }>('/api/layouts', { method: 'POST', body })
    await load()
    return made
  }

  async function update(id: number, body: { name?: string, archived?: boolean }) {
    await $fetch(`/api/layouts/${id}`, { method: 'PATCH', body })
    await load()
  }

  async function remove(id: number) {
    await $fetch(`/api/layouts/${id}`, { method: 'DELETE' })
    await load()
  }

  async function importFile(file: File) {
    const form = new FormData()
    form.append('file', file)
    const made = await $fetch<{ id: number, slug: string }>('/api/layouts/import', { method: 'POST', body: form })
    await load()
    return made
  }

  // plain refs: Pinia hands the server's list to the browser through them (a readonly ref would not take it)
  return { layouts, loaded, load, bySlug, create, update, remove, importFile }
})
