/**
 * Sequelize models for the tables the server reads and writes through the ORM. The hot
 * tables of the live pipeline (events, changes) are written with plain SQL in
 * server/runtime, because group commits need multi-row inserts.
 */
import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type CreationOptional, type NonAttribute, type Sequelize } from "sequelize";
import type { Role, RulebookStatus } from "@shared/contract/rest";
import type { Rulebook } from "@shared/rulebook/schema";
import { defineRecordModels, type RecordModels } from "./recordModels";

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare role: Role;
  declare passwordHash: string;
  declare alarmMail: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Layout extends Model<InferAttributes<Layout>, InferCreationAttributes<Layout>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare scaleName: string;
  declare scaleRatio: number;
  declare schematic: Record<string, unknown> | null;
  declare liveVersion: number | null;
  declare aspectRev: CreationOptional<string>;
  /** Grows by one with every save of the records; `PUT` must name the current one. */
  declare revision: CreationOptional<number>;
  /** Set while the layout is archived: not live, read-only. */
  declare archivedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class RulebookVersion extends Model<InferAttributes<RulebookVersion>, InferCreationAttributes<RulebookVersion>> {
  declare id: CreationOptional<number>;
  declare layoutId: number;
  declare version: number;
  declare status: RulebookStatus;
  declare rulebook: Rulebook;
  declare proof: unknown | null;
  declare note: string | null;
  declare authorId: number | null;
  declare createdAt: CreationOptional<Date>;
  declare publishedAt: Date | null;
}

export class AuditEntry extends Model<InferAttributes<AuditEntry>, InferCreationAttributes<AuditEntry>> {
  declare id: CreationOptional<number>;
  declare layoutId: number | null;
  declare userId: number | null;
  declare action: string;
  declare target: string | null;
  declare reason: string | null;
  declare before: unknown;
  declare after: unknown;
  declare at: CreationOptional<Date>;
}

/** The one society this install serves (row id 1). */
export class Society extends Model<InferAttributes<Society>, InferCreationAttributes<Society>> {
  declare id: CreationOptional<number>;
  declare name: string;
  declare createdAt: CreationOptional<Date>;
}

/** A signed-in browser: the session cookie's JWT names it by `id`. */
export class AuthSession extends Model<InferAttributes<AuthSession>, InferCreationAttributes<AuthSession>> {
  declare id: string;
  declare userId: number;
  declare createdAt: CreationOptional<Date>;
  declare expiresAt: Date;
  declare user?: NonAttribute<User>;
}

export class PasswordReset extends Model<InferAttributes<PasswordReset>, InferCreationAttributes<PasswordReset>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare tokenHash: string;
  declare createdAt: Date;
  declare expiresAt: Date;
  declare usedAt: Date | null;
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare role: Role;
  declare tokenHash: string;
  declare invitedBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare expiresAt: Date;
  declare acceptedAt: CreationOptional<Date | null>;
  declare revokedAt: CreationOptional<Date | null>;
}

/** Alarm settings a layout's engineer changed (see migration 010); absent keys take the defaults. */
export class AlarmSettingsRecord extends Model<InferAttributes<AlarmSettingsRecord>, InferCreationAttributes<AlarmSettingsRecord>> {
  declare layoutId: number;
  declare settings: Record<string, number>;
  declare updatedBy: number | null;
  declare updatedAt: CreationOptional<Date>;
}

export interface Models extends RecordModels {
  User: typeof User;
  Layout: typeof Layout;
  RulebookVersion: typeof RulebookVersion;
  AuditEntry: typeof AuditEntry;
  Society: typeof Society;
  AuthSession: typeof AuthSession;
  PasswordReset: typeof PasswordReset;
  Invitation: typeof Invitation;
  AlarmSettingsRecord: typeof AlarmSettingsRecord;
}

export function defineModels(sequelize: Sequelize): Models {
  User.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.TEXT, allowNull: false, unique: true },
      name: { type: DataTypes.TEXT, allowNull: false },
      role: { type: DataTypes.TEXT, allowNull: false },
      passwordHash: { type: DataTypes.TEXT, allowNull: false },
      alarmMail: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
      updatedAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "users" },
  );
  Layout.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.TEXT, allowNull: false, unique: true },
      name: { type: DataTypes.TEXT, allowNull: false },
      scaleName: { type: DataTypes.TEXT, allowNull: false },
      scaleRatio: { type: DataTypes.DOUBLE, allowNull: false },
      // json, not jsonb: keeps the author's key order (migration 007)
      schematic: { type: DataTypes.JSON },
      liveVersion: { type: DataTypes.INTEGER },
      aspectRev: { type: DataTypes.BIGINT, defaultValue: 0 },
      revision: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      archivedAt: { type: DataTypes.DATE },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
      updatedAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "layouts" },
  );
  RulebookVersion.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      layoutId: { type: DataTypes.INTEGER, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      status: { type: DataTypes.TEXT, allowNull: false },
      rulebook: { type: DataTypes.JSON, allowNull: false },
      proof: { type: DataTypes.JSONB },
      note: { type: DataTypes.TEXT },
      authorId: { type: DataTypes.INTEGER },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
      publishedAt: { type: DataTypes.DATE },
    },
    { sequelize, tableName: "rulebook_versions" },
  );
  AuditEntry.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      layoutId: { type: DataTypes.INTEGER },
      userId: { type: DataTypes.INTEGER },
      action: { type: DataTypes.TEXT, allowNull: false },
      target: { type: DataTypes.TEXT },
      reason: { type: DataTypes.TEXT },
      before: { type: DataTypes.JSONB },
      after: { type: DataTypes.JSONB },
      at: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "audit_entries" },
  );
  AlarmSettingsRecord.init(
    {
      layoutId: { type: DataTypes.INTEGER, primaryKey: true },
      settings: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
      updatedBy: { type: DataTypes.INTEGER },
      updatedAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "alarm_settings" },
  );
  const records = defineRecordModels(sequelize, Layout);
  Society.init(
    {
      id: { type: DataTypes.SMALLINT, primaryKey: true, defaultValue: 1 },
      name: { type: DataTypes.TEXT, allowNull: false },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "society" },
  );
  AuthSession.init(
    {
      id: { type: DataTypes.TEXT, primaryKey: true },
      userId: { type: DataTypes.INTEGER, allowNull: false },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: "auth_sessions" },
  );
  PasswordReset.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      userId: { type: DataTypes.INTEGER, allowNull: false },
      tokenHash: { type: DataTypes.TEXT, allowNull: false, unique: true },
      createdAt: { type: DataTypes.DATE, allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE },
    },
    { sequelize, tableName: "password_resets" },
  );
  Invitation.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.TEXT, allowNull: false },
      role: { type: DataTypes.TEXT, allowNull: false },
      tokenHash: { type: DataTypes.TEXT, allowNull: false, unique: true },
      invitedBy: { type: DataTypes.INTEGER },
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      acceptedAt: { type: DataTypes.DATE },
      revokedAt: { type: DataTypes.DATE },
    },
    { sequelize, tableName: "invitations" },
  );
  AuthSession.belongsTo(User, { foreignKey: "userId", as: "user" });
  return { User, Layout, RulebookVersion, AuditEntry, Society, AuthSession, PasswordReset, Invitation, AlarmSettingsRecord, ...records };
}
