/**
 * A board's credentials end when its secret is re-issued or its node record is removed: the
 * broker (its own process) must then drop a connection made with the old secret, or a stolen
 * secret would keep working for as long as the thief stays connected. Every such change,
 * from any code path, notifies `blocklight_node_credentials` with the layout id and node id;
 * PostgreSQL delivers it when the change commits (broker/credentialWatch.ts listens).
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";
import { NODE_CREDENTIALS_CHANNEL } from "../../nodeSecret";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    CREATE FUNCTION notify_node_credentials() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      PERFORM pg_notify('${NODE_CREDENTIALS_CHANNEL}', json_build_object('layoutId', OLD.layout_id, 'node', OLD.node_id)::text);
      RETURN NULL;
    END $$;
    CREATE TRIGGER nodes_secret_changed AFTER UPDATE OF secret_hash ON nodes
      FOR EACH ROW WHEN (OLD.secret_hash IS DISTINCT FROM NEW.secret_hash) EXECUTE FUNCTION notify_node_credentials();
    CREATE TRIGGER nodes_removed AFTER DELETE ON nodes
      FOR EACH ROW EXECUTE FUNCTION notify_node_credentials();
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP TRIGGER IF EXISTS nodes_removed ON nodes;
    DROP TRIGGER IF EXISTS nodes_secret_changed ON nodes;
    DROP FUNCTION IF EXISTS notify_node_credentials();
  `);
};
