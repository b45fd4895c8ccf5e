import { QueryTypes, type Sequelize } from 'sequelize'
import type { BlockMaintenance, MaintenanceTask, StockItem } from '#shared/types/maintenance'
import { layoutMaintenance } from './maintenance'
import { listMaintenanceTasks } from './maintenance-tasks'
import { listStock } from './stock'

/** What is due (or, for tasks, due soon) on one layout. */
export interface LayoutDue {
  layoutId: number
  layoutName: string
  blocks: BlockMaintenance[]
  stock: StockItem[]
  tasks: (MaintenanceTask & { layoutId: number })[]
}

/** Every layout in use with its due blocks, stock and tasks (due soon included for tasks). */
export async function maintenanceDue(sequelize: Sequelize, now = new Date()): Promise<LayoutDue[]> {
  const layouts = await sequelize.query<{ id: number, name: string, definition: never }>(
    'SELECT id, name, definition FROM layouts WHERE archived_at IS NULL ORDER BY name, id', { type: QueryTypes.SELECT })
  const tasks = await listMaintenanceTasks(sequelize, null, now.getTime())
  const result: LayoutDue[] = []
  for (const layout of layouts) {
    const { blocks } = await layoutMaintenance(sequelize, layout.id, layout.definition, now)
    const stock = await listStock(sequelize, layout.id, layout.definition, now)
    result.push({
      layoutId: layout.id, layoutName: layout.name,
      blocks: blocks.filter(b => b.state === 'due'),
      stock: stock.filter(s => s.state === 'due'),
      tasks: tasks.filter(t => t.layoutId === layout.id && (t.state === 'due' || t.state === 'due-soon')),
    })
  }
  return result
}

/** How many things are due now (blocks, stock and tasks due today or overdue), for the navigation. */
export async function maintenanceDueCount(sequelize: Sequelize, now = new Date()): Promise<number> {
  const due = await maintenanceDue(sequelize, now)
  return due.reduce((n, l) => n + l.blocks.length + l.stock.length + l.tasks.filter(t => t.state === 'due').length, 0)
}
