import type { PersonView } from '#shared/types/people'
import type { CreateUserBody, UpdateUserBody } from '#shared/schemas/account'

/** The People screen's list of accounts, and the admin's changes to it. */
export const usePeopleStore = defineStore('people', () => {
  const people = ref<PersonView[]>([])
  const loaded = ref(false)
  const requestFetch = useRequestFetch()

  async function load() {
    const result = await requestFetch<{ people: PersonView[] }>('/api/users')
    people.value = result.people
    loaded.value = true
  }

  async function create(body: CreateUserBody): Promise<PersonView> {
    const { person } = await $fetch<{ person: PersonView }>('/api/users', { method: 'POST', body })
    people.value = [...people.value, person].sort((a, b) => a.name.localeCompare(b.name))
    return person
  }

  async function update(id: number, body: UpdateUserBody): Promise<PersonView> {
    const { person } = await $fetch<{ person: PersonView }>(`/api/users/${id}`, { method: 'PATCH', body })
    people.value = people.value.map(p => (p.id === id ? person : p))
    return person
  }

  // `people` is returned as a plain ref: Pinia restores server-rendered state into returned refs when the
  // page hydrates, and silently skips a readonly one (the list rendered on the server would then vanish).
  return { people, loaded, load, create, update }
})
