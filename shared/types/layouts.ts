/** One line of the Layouts list. */
export interface LayoutSummary {
  id: number
  slug: string
  name: string
  version: number
  scale: string | null
  blocks: number
  signals: number
  areas: number
  updatedAt: string
}
