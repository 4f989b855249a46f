/**
 * Accounts for a real society (issue 11): the society's own record, server-side sign-in
 * sessions (so signing out or changing a password ends a cookie at once, not when its JWT
 * expires), single-use password resets, and revocable invitations.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    -- One row: the society that runs this install (named at setup, or by the demo seed).
    CREATE TABLE society (
      id smallint PRIMARY KEY DEFAULT 1 CHECK (id = 1),
      name text NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );

    -- A signed-in browser. The cookie's JWT names the row; no row, no session.
    CREATE TABLE auth_sessions (
      id text PRIMARY KEY,
      user_id integer NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      created_at timestamptz NOT NULL DEFAULT now(),
      expires_at timestamptz NOT NULL
    );
    CREATE INDEX auth_sessions_user ON auth_sessions (user_id);

    CREATE TABLE password_resets (
      id serial PRIMARY KEY,
      user_id integer NOT NULL REFERENCES users(id) ON DELETE CASCADE,
      -- sha256 of the token mailed to the member; the token itself is never stored
      token_hash text NOT NULL UNIQUE,
      created_at timestamptz NOT NULL,
      expires_at timestamptz NOT NULL,
      used_at timestamptz
    );
    CREATE INDEX password_resets_user ON password_resets (user_id, created_at DESC);

    ALTER TABLE invitations ADD COLUMN revoked_at timestamptz;
    CREATE INDEX invitations_email ON invitations (email);
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP INDEX IF EXISTS invitations_email;
    ALTER TABLE invitations DROP COLUMN IF EXISTS revoked_at;
    DROP TABLE IF EXISTS password_resets, auth_sessions, society;
  `);
};
