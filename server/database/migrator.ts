import { Umzug, SequelizeStorage } from 'umzug'
import type { Sequelize } from 'sequelize'
import { migrations } from './migrations'

/** The umzug migrator for a connection; the applied migrations are recorded in the `migrations` table. */
export function createMigrator(sequelize: Sequelize) {
  return new Umzug({
    migrations: migrations.map(m => ({ name: m.name, up: m.up, down: m.down })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'migrations' }),
    logger: undefined,
  })
}
