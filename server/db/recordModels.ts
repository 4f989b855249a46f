/**
 * The layout's records as Sequelize models: lines, detectors, signals, points and nodes, one
 * row each, keyed by (layout, id) and kept in the author's order by `position`. A layout has
 * many of each (`layout.getDetectors()`, `include: [{ association: "detectors" }]`).
 *
 * The live pipeline and the broker still read `nodes` with plain SQL on their own pools:
 * those reads happen on every board connection and runner start, outside the ORM's pool.
 */
import { DataTypes, Model, type ModelStatic, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { Aspect } from "@shared/rulebook/schema";
import type { PointsWorking } from "@shared/layout/schema";
import type { Layout } from "./models";

export class LineRecord extends Model<InferAttributes<LineRecord>, InferCreationAttributes<LineRecord>> {
  declare layoutId: number;
  declare lineId: string;
  declare name: string;
  declare position: number;
}

export class DetectorRecord extends Model<InferAttributes<DetectorRecord>, InferCreationAttributes<DetectorRecord>> {
  declare layoutId: number;
  declare detectorId: string;
  declare name: string;
  declare lineId: string;
  /** Metres of model track from the start of the line. */
  declare at: number;
  declare position: number;
}

export class SignalRecord extends Model<InferAttributes<SignalRecord>, InferCreationAttributes<SignalRecord>> {
  declare layoutId: number;
  declare signalId: string;
  declare name: string;
  declare lineId: string;
  declare at: number;
  declare aspects: Aspect[];
  declare position: number;
}

export class PointsRecord extends Model<InferAttributes<PointsRecord>, InferCreationAttributes<PointsRecord>> {
  declare layoutId: number;
  declare pointsId: string;
  declare name: string;
  declare lineId: string;
  declare at: number;
  declare worked: CreationOptional<PointsWorking>;
  declare position: number;
}

export class NodeRecord extends Model<InferAttributes<NodeRecord>, InferCreationAttributes<NodeRecord>> {
  declare layoutId: number;
  declare nodeId: string;
  declare name: string;
  declare detectors: string[];
  declare signals: string[];
  declare points: CreationOptional<string[]>;
  /** bcrypt hash of the board's MQTT password; never leaves the server. */
  declare secretHash: CreationOptional<string | null>;
  declare position: number;
  declare createdAt: CreationOptional<Date>;
}

export interface RecordModels {
  LineRecord: typeof LineRecord;
  DetectorRecord: typeof DetectorRecord;
  SignalRecord: typeof SignalRecord;
  PointsRecord: typeof PointsRecord;
  NodeRecord: typeof NodeRecord;
}

// Functions, not shared objects: Sequelize writes each attribute's column name into its
// definition object, so one object used twice would map two attributes to one column.
const layoutKey = () => ({ type: DataTypes.INTEGER, allowNull: false, primaryKey: true });
const ownKey = () => ({ type: DataTypes.TEXT, allowNull: false, primaryKey: true });
const text = () => ({ type: DataTypes.TEXT, allowNull: false });
const position = () => ({ type: DataTypes.INTEGER, allowNull: false });
const metres = () => ({ type: DataTypes.DOUBLE, allowNull: false });
const idList = () => ({ type: DataTypes.JSONB, allowNull: false, defaultValue: [] });

export function defineRecordModels(sequelize: Sequelize, layout: typeof Layout): RecordModels {
  LineRecord.init({ layoutId: layoutKey(), lineId: ownKey(), name: text(), position: position() }, { sequelize, tableName: "lines" });
  DetectorRecord.init(
    { layoutId: layoutKey(), detectorId: ownKey(), name: text(), lineId: text(), at: metres(), position: position() },
    { sequelize, tableName: "detectors" },
  );
  SignalRecord.init(
    { layoutId: layoutKey(), signalId: ownKey(), name: text(), lineId: text(), at: metres(), aspects: { type: DataTypes.JSONB, allowNull: false }, position: position() },
    { sequelize, tableName: "signals" },
  );
  PointsRecord.init(
    { layoutId: layoutKey(), pointsId: ownKey(), name: text(), lineId: text(), at: metres(), worked: { type: DataTypes.TEXT, allowNull: false, defaultValue: "hand" }, position: position() },
    { sequelize, tableName: "points" },
  );
  NodeRecord.init(
    {
      layoutId: layoutKey(),
      nodeId: ownKey(),
      name: text(),
      detectors: idList(),
      signals: idList(),
      points: idList(),
      secretHash: { type: DataTypes.TEXT },
      position: position(),
      createdAt: { type: DataTypes.DATE, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: "nodes" },
  );
  const belongs = <M extends Model>(model: ModelStatic<M>, as: string) => {
    layout.hasMany(model, { foreignKey: "layoutId", as, onDelete: "CASCADE" });
    model.belongsTo(layout, { foreignKey: "layoutId", as: "layout" });
  };
  belongs(LineRecord, "lines");
  belongs(DetectorRecord, "detectors");
  belongs(SignalRecord, "signals");
  belongs(PointsRecord, "points");
  belongs(NodeRecord, "nodes");
  return { LineRecord, DetectorRecord, SignalRecord, PointsRecord, NodeRecord };
}
