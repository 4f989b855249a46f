/**
 * Board secrets are checked with a fast digest instead of bcrypt (server/nodeSecret.ts):
 * new secrets are stored as `sha256:<digest>`. Hashes issued before stay valid (`$2…`,
 * bcrypt): nobody holds the plain secrets, so they cannot be converted here; the broker
 * replaces each with its digest on that board's first successful login, and issuing a new
 * secret replaces it too. The check keeps anything else out of the column.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    ALTER TABLE nodes ADD CONSTRAINT nodes_secret_hash_form
      CHECK (secret_hash IS NULL OR secret_hash LIKE 'sha256:%' OR secret_hash LIKE '$2%');
    COMMENT ON COLUMN nodes.secret_hash IS 'sha256:<base64url SHA-256 of the secret>, or a bcrypt hash issued before migration 005 (replaced at the next login)';
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  // bcrypt cannot be recomputed from a digest: boards with a digest need a new secret after a downgrade.
  await sequelize.query(`
    UPDATE nodes SET secret_hash = NULL WHERE secret_hash LIKE 'sha256:%';
    ALTER TABLE nodes DROP CONSTRAINT nodes_secret_hash_form;
    COMMENT ON COLUMN nodes.secret_hash IS NULL;
  `);
};
