import type { TaskInput } from '#shared/schemas/maintenance'
import type { MaintenanceTask } from '#shared/types/maintenance'

/** Maintenance tasks of one layout other than track cleaning (buildings, wiring joints, bulbs). */
export const useTasksStore = defineStore('tasks', () => {
  const layoutId = ref<number | null>(null)
  const tasks = ref<MaintenanceTask[]>([])
  const loadError = ref<string | null>(null)

  async function load(id: number) {
    layoutId.value = id
    loadError.value = null
    try {
      tasks.value = (await $fetch<{ tasks: MaintenanceTask[] }>(`/api/layouts/${id}/tasks`)).tasks
    } catch (e) {
      loadError.value = toApiError(e).message
    }
  }

  async function addTask(input: TaskInput) {
    const id = layoutId.value!
    await $fetch(`/api/layouts/${id}/tasks`, { method: 'POST', body: input })
    await load(id)
  }

  async function updateTask(taskId: number, input: TaskInput) {
    await $fetch<{ id: number }>(`/api/tasks/${taskId}`, { method: 'PUT', body: input })
    await load(layoutId.value!)
  }

  /** Removes the task with its done log. */
  async function removeTask(taskId: number) {
    const url: string = `/api/tasks/${taskId}`
    const send = $fetch as (url: string, options: { method: 'DELETE' }) => Promise<{ deleted: number, doneEntries: number }>
    await send(url, { method: 'DELETE' })
    await load(layoutId.value!)
  }

  async function markDone(taskId: number, note?: string) {
    const body = { note }
    await $fetch<{ id: number }>(`/api/tasks/${taskId}/done`, { method: 'POST', body })
    await load(layoutId.value!)
  }

  return { layoutId, tasks, loadError, load, addTask, updateTask, removeTask, markDone }
})
