import type { CleaningThresholds } from '#shared/maintenance/due'
import type { CleaningInput, ThresholdsInput } from '#shared/schemas/maintenance'
import type { BlockMaintenance, CleaningRecord } from '#shared/types/maintenance'

/** Track cleaning of one layout: each block's use since its last cleaning, the thresholds and the history. */
export const useMaintenanceStore = defineStore('maintenance', () => {
  const layoutId = ref<number | null>(null)
  const blocks = ref<BlockMaintenance[]>([])
  const thresholds = ref<CleaningThresholds | null>(null)
  const cleanings = ref<CleaningRecord[]>([])
  const loading = ref(false)
  const loadError = ref<string | null>(null)

  async function load(id: number) {
    layoutId.value = id
    loading.value = true
    loadError.value = null
    try {
      const [m, c] = await Promise.all([
        $fetch<{ blocks: BlockMaintenance[], thresholds: CleaningThresholds }>(`/api/layouts/${id}/maintenance`),
        $fetch<{ cleanings: CleaningRecord[] }>(`/api/layouts/${id}/cleanings`),
      ])
      blocks.value = m.blocks
      thresholds.value = m.thresholds
      cleanings.value = c.cleanings
    } catch (e) {
      loadError.value = toApiError(e).message
    } finally {
      loading.value = false
    }
  }

  async function recordCleaning(input: CleaningInput) {
    const id = layoutId.value!
    await $fetch(`/api/layouts/${id}/cleanings`, { method: 'POST', body: input })
    await load(id)
  }

  async function saveThresholds(input: ThresholdsInput) {
    const id = layoutId.value!
    const r = await $fetch<{ thresholds: CleaningThresholds }>(`/api/layouts/${id}/maintenance/thresholds`, { method: 'PUT', body: input })
    thresholds.value = r.thresholds
    await load(id)
  }

  const dueCount = computed(() => blocks.value.filter(b => b.state === 'due').length)

  return { layoutId, blocks, thresholds, cleanings, loading, loadError, dueCount, load, recordCleaning, saveThresholds }
})
