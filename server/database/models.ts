import {
  DataTypes, Model,
  type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize,
} from 'sequelize'
import type { Role } from '#shared/utils/roles'
import type { OutboxState } from '#shared/types/mail'

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>
  declare email: string
  declare name: string
  declare role: Role
  declare passwordHash: string
  declare disabledAt: CreationOptional<Date | null>
  declare sessionVersion: CreationOptional<number>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Layout extends Model<InferAttributes<Layout>, InferCreationAttributes<Layout>> {
  declare id: CreationOptional<number>
  declare slug: string
  declare name: string
  declare definition: unknown
  declare version: CreationOptional<number>
  declare latestVersion: CreationOptional<number>
  declare archivedAt: CreationOptional<Date | null>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class LayoutVersion extends Model<InferAttributes<LayoutVersion>, InferCreationAttributes<LayoutVersion>> {
  declare id: CreationOptional<number>
  declare layoutId: ForeignKey<Layout['id']>
  declare version: number
  declare definition: unknown
  declare summary: CreationOptional<object>
  declare valid: CreationOptional<boolean>
  declare createdBy: ForeignKey<User['id']> | null
  declare createdAt: CreationOptional<Date>
}

export class OperatingSession extends Model<InferAttributes<OperatingSession>, InferCreationAttributes<OperatingSession>> {
  declare id: CreationOptional<number>
  declare layoutId: ForeignKey<Layout['id']>
  declare name: string
  declare startedAt: Date
  declare endedAt: CreationOptional<Date | null>
  declare startedBy: ForeignKey<User['id']> | null
  declare fastClockRatio: CreationOptional<number>
  declare fastClockStart: CreationOptional<string | null>
  declare notes: CreationOptional<string | null>
  declare endedBy: ForeignKey<User['id']> | null
  declare layoutVersion: CreationOptional<number | null>
}

export class JournalEvent extends Model<InferAttributes<JournalEvent>, InferCreationAttributes<JournalEvent>> {
  declare id: CreationOptional<string>
  declare layoutId: ForeignKey<Layout['id']>
  declare sessionId: ForeignKey<OperatingSession['id']> | null
  declare at: Date
  declare type: string
  declare subject: string | null
  declare payload: unknown
  declare userId: ForeignKey<User['id']> | null
  declare entryKey: CreationOptional<string | null>
}

export class Device extends Model<InferAttributes<Device>, InferCreationAttributes<Device>> {
  declare id: CreationOptional<number>
  declare username: string
  declare name: string
  declare layoutId: ForeignKey<Layout['id']> | null
  declare passwordHash: string
  declare disabledAt: CreationOptional<Date | null>
  declare createdAt: CreationOptional<Date>
}

export class EndedSession extends Model<InferAttributes<EndedSession>, InferCreationAttributes<EndedSession>> {
  declare id: string
  declare userId: ForeignKey<User['id']>
  declare endedAt: CreationOptional<Date>
}

export class LayoutWiring extends Model<InferAttributes<LayoutWiring>, InferCreationAttributes<LayoutWiring>> {
  declare layoutId: number
  declare kind: 'detector' | 'signal' | 'turnout'
  declare itemId: string
  declare deviceId: number
}

export class OutboxMessage extends Model<InferAttributes<OutboxMessage>, InferCreationAttributes<OutboxMessage>> {
  declare id: CreationOptional<number>
  declare kind: string
  declare toAddress: string
  declare subject: string
  declare text: string
  declare html: string
  declare state: CreationOptional<OutboxState>
  declare attempts: CreationOptional<number>
  declare nextAttemptAt: CreationOptional<Date>
  declare lastError: CreationOptional<string | null>
  declare sentAt: CreationOptional<Date | null>
  declare createdAt: CreationOptional<Date>
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>
  declare email: string
  declare role: Role
  declare tokenHash: string
  declare invitedBy: ForeignKey<User['id']> | null
  declare outboxId: CreationOptional<ForeignKey<OutboxMessage['id']> | null>
  declare expiresAt: Date
  declare acceptedAt: CreationOptional<Date | null>
  declare acceptedUserId: CreationOptional<ForeignKey<User['id']> | null>
  declare revokedAt: CreationOptional<Date | null>
  declare createdAt: CreationOptional<Date>
}

export class PasswordReset extends Model<InferAttributes<PasswordReset>, InferCreationAttributes<PasswordReset>> {
  declare id: CreationOptional<number>
  declare userId: ForeignKey<User['id']>
  declare tokenHash: string
  declare expiresAt: Date
  declare usedAt: CreationOptional<Date | null>
  declare createdAt: CreationOptional<Date>
}

export interface Models {
  User: typeof User
  Layout: typeof Layout
  LayoutVersion: typeof LayoutVersion
  OperatingSession: typeof OperatingSession
  JournalEvent: typeof JournalEvent
  Device: typeof Device
  EndedSession: typeof EndedSession
  LayoutWiring: typeof LayoutWiring

  OutboxMessage: typeof OutboxMessage
  Invitation: typeof Invitation
  PasswordReset: typeof PasswordReset
}

const timestamps = { underscored: true, timestamps: true } as const

/** Registers the models on a connection. Tables themselves come from the migrations in ./migrations. */
export function defineModels(sequelize: Sequelize): Models {
  User.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(80), allowNull: false },
    role: { type: DataTypes.STRING(16), allowNull: false },
    passwordHash: { type: DataTypes.STRING(255), allowNull: false },
    disabledAt: { type: DataTypes.DATE, allowNull: true },
    sessionVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  }, { sequelize, tableName: 'users', ...timestamps })

  Layout.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    slug: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    definition: { type: DataTypes.JSONB, allowNull: false },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    latestVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    archivedAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  }, { sequelize, tableName: 'layouts', ...timestamps })

  LayoutVersion.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    version: { type: DataTypes.INTEGER, allowNull: false },
    definition: { type: DataTypes.JSONB, allowNull: false },
    summary: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
    valid: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    createdAt: DataTypes.DATE,
  }, { sequelize, tableName: 'layout_versions', underscored: true, timestamps: true, updatedAt: false })

  OperatingSession.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    startedAt: { type: DataTypes.DATE, allowNull: false },
    endedAt: { type: DataTypes.DATE, allowNull: true },
    fastClockRatio: { type: DataTypes.REAL, allowNull: false, defaultValue: 1 },
    fastClockStart: { type: DataTypes.STRING(5), allowNull: true },
    notes: { type: DataTypes.TEXT, allowNull: true },
    layoutVersion: { type: DataTypes.INTEGER, allowNull: true },
  }, { sequelize, tableName: 'operating_sessions', underscored: true, timestamps: false })

  JournalEvent.init({
    id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
    at: { type: DataTypes.DATE, allowNull: false },
    type: { type: DataTypes.STRING(48), allowNull: false },
    subject: { type: DataTypes.STRING(64), allowNull: true },
    payload: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
    entryKey: { type: DataTypes.STRING(64), allowNull: true },
  }, { sequelize, tableName: 'events', underscored: true, timestamps: false })

  Device.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    username: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(80), allowNull: false },
    passwordHash: { type: DataTypes.STRING(255), allowNull: false },
    disabledAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
  }, { sequelize, tableName: 'devices', underscored: true, timestamps: true, updatedAt: false })

  EndedSession.init({
    id: { type: DataTypes.STRING(64), primaryKey: true },
    endedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
  }, { sequelize, tableName: 'ended_sessions', underscored: true, timestamps: false })
  LayoutWiring.init({
    layoutId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
    kind: { type: DataTypes.STRING(16), allowNull: false, primaryKey: true },
    itemId: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    deviceId: { type: DataTypes.INTEGER, allowNull: false },
  }, { sequelize, tableName: 'layout_wiring', underscored: true, timestamps: false })

  OutboxMessage.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    kind: { type: DataTypes.STRING(32), allowNull: false },
    toAddress: { type: DataTypes.STRING(254), allowNull: false },
    subject: { type: DataTypes.STRING(200), allowNull: false },
    text: { type: DataTypes.TEXT, allowNull: false },
    html: { type: DataTypes.TEXT, allowNull: false },
    state: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'queued' },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    nextAttemptAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    lastError: { type: DataTypes.TEXT, allowNull: true },
    sentAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
  }, { sequelize, tableName: 'outbox', underscored: true, timestamps: true, updatedAt: false })

  Invitation.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    email: { type: DataTypes.STRING(254), allowNull: false },
    role: { type: DataTypes.STRING(16), allowNull: false },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    outboxId: { type: DataTypes.INTEGER, allowNull: true },
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    acceptedAt: { type: DataTypes.DATE, allowNull: true },
    acceptedUserId: { type: DataTypes.INTEGER, allowNull: true },
    revokedAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
  }, { sequelize, tableName: 'invitations', underscored: true, timestamps: true, updatedAt: false })

  PasswordReset.init({
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    usedAt: { type: DataTypes.DATE, allowNull: true },
    createdAt: DataTypes.DATE,
  }, { sequelize, tableName: 'password_resets', underscored: true, timestamps: true, updatedAt: false })

  Layout.hasMany(LayoutVersion, { foreignKey: 'layoutId' })
  LayoutVersion.belongsTo(Layout, { foreignKey: 'layoutId' })
  LayoutVersion.belongsTo(User, { foreignKey: 'createdBy', as: 'author' })
  OperatingSession.belongsTo(Layout, { foreignKey: 'layoutId' })
  OperatingSession.belongsTo(User, { foreignKey: 'startedBy', as: 'starter' })
  OperatingSession.belongsTo(User, { foreignKey: 'endedBy', as: 'ender' })
  JournalEvent.belongsTo(Layout, { foreignKey: 'layoutId' })
  JournalEvent.belongsTo(OperatingSession, { foreignKey: 'sessionId' })
  JournalEvent.belongsTo(User, { foreignKey: 'userId' })
  Device.belongsTo(Layout, { foreignKey: 'layoutId' })
  EndedSession.belongsTo(User, { foreignKey: 'userId' })
  Invitation.belongsTo(User, { foreignKey: 'invitedBy', as: 'inviter' })
  Invitation.belongsTo(OutboxMessage, { foreignKey: 'outboxId', as: 'mail' })
  PasswordReset.belongsTo(User, { foreignKey: 'userId' })

  return { User, Layout, LayoutVersion, OperatingSession, JournalEvent, Device, EndedSession, LayoutWiring, OutboxMessage, Invitation, PasswordReset }
}
