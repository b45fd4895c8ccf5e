import { Sequelize } from 'sequelize'
import pg from 'pg'
import { databaseSettings, type DatabaseSettings } from './config'
import { defineModels, type Models } from './models'

export interface Database {
  sequelize: Sequelize
  models: Models
}

/** Opens a Sequelize connection pool and registers the models. Does not create tables (migrations do). */
export function openDatabase(settings: DatabaseSettings = databaseSettings()): Database {
  const sequelize = new Sequelize(settings.database, settings.username, settings.password, {
    host: settings.host,
    port: settings.port,
    dialect: 'postgres',
    dialectModule: pg,
    logging: false,
    pool: { max: 10, min: 0, idle: 10_000, acquire: 15_000 },
  })
  return { sequelize, models: defineModels(sequelize) }
}
