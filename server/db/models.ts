/**
 * Sequelize models for the tables the server reads and writes through the ORM. The hot
 * tables of the live pipeline (events, changes) are written with plain SQL in
 * server/runtime, because group commits need multi-row inserts.
 */
import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type CreationOptional, type Sequelize } from "sequelize";
import type { Role, RulebookStatus } from "../../shared/contract/rest";
import type { Rulebook } from "../../shared/rulebook/schema";
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

export interface Models extends RecordModels {
  User: typeof User;
  Layout: typeof Layout;
  RulebookVersion: typeof RulebookVersion;
  AuditEntry: typeof AuditEntry;
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
  const records = defineRecordModels(sequelize, Layout);
  return { User, Layout, RulebookVersion, AuditEntry, ...records };
}
