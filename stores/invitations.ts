import type { InvitationView } from '#shared/types/mail'
import type { InviteBody } from '#shared/schemas/mail'

/** The People screen's open invitations, and the admin's invites and revocations. */
export const useInvitationsStore = defineStore('invitations', () => {
  const invitations = ref<InvitationView[]>([])
  const requestFetch = useRequestFetch()

  async function load() {
    const result = await requestFetch<{ invitations: InvitationView[] }>('/api/invitations')
    invitations.value = result.invitations
  }

  async function invite(body: InviteBody) {
    await $fetch('/api/invitations', { method: 'POST', body })
    await load()
  }

  async function revoke(id: number) {
    await $fetch(`/api/invitations/${id}`, { method: 'DELETE' })
    invitations.value = invitations.value.filter(i => i.id !== id)
  }

  // Plain refs (not readonly): Pinia restores server-rendered state only into refs it can write when the page hydrates.
  return { invitations, load, invite, revoke }
})
