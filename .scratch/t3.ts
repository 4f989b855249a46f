import { Sequelize } from "sequelize";
import { defineModels } from "/work/wt/workbench-api/server/db/models";
const s = new Sequelize("postgres://x@localhost/x", { dialect: "postgres", define: { underscored: true, timestamps: false } });
const m = defineModels(s);
console.log(Object.entries(m.DetectorRecord.getAttributes()).map(([k, v]) => `${k}->${v.field}`));
console.log(Object.entries(m.LineRecord.getAttributes()).map(([k, v]) => `${k}->${v.field}`));
console.log(m.DetectorRecord.build({ layoutId: 1, detectorId: "MA", name: "x", lineId: "main", at: 1, position: 0 }).get());
