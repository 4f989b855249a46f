/**
 * The first schema. Written as SQL because the live pipeline's hot paths (events, changes)
 * are read and written with hand-tuned SQL too, and the indexes matter more than the ORM.
 */
import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

export const up: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    CREATE TABLE users (
      id serial PRIMARY KEY,
      email text NOT NULL UNIQUE,
      name text NOT NULL,
      role text NOT NULL CHECK (role IN ('admin','engineer','signaller','maintainer','viewer')),
      password_hash text NOT NULL,
      alarm_mail boolean NOT NULL DEFAULT false,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE layouts (
      id serial PRIMARY KEY,
      slug text NOT NULL UNIQUE,
      name text NOT NULL,
      scale_name text NOT NULL,
      scale_ratio double precision NOT NULL,
      schematic jsonb,
      live_version integer,
      -- rev of the last aspect command published for this layout (CONTRACT.md §2)
      aspect_rev bigint NOT NULL DEFAULT 0,
      created_at timestamptz NOT NULL DEFAULT now(),
      updated_at timestamptz NOT NULL DEFAULT now()
    );

    CREATE TABLE lines (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      line_id text NOT NULL,
      name text NOT NULL,
      position integer NOT NULL,
      PRIMARY KEY (layout_id, line_id)
    );
    CREATE TABLE detectors (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      detector_id text NOT NULL,
      name text NOT NULL,
      line_id text NOT NULL,
      at double precision NOT NULL,
      position integer NOT NULL,
      PRIMARY KEY (layout_id, detector_id)
    );
    CREATE TABLE signals (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      signal_id text NOT NULL,
      name text NOT NULL,
      line_id text NOT NULL,
      at double precision NOT NULL,
      aspects jsonb NOT NULL,
      position integer NOT NULL,
      PRIMARY KEY (layout_id, signal_id)
    );
    CREATE TABLE points (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      points_id text NOT NULL,
      name text NOT NULL,
      line_id text NOT NULL,
      at double precision NOT NULL,
      position integer NOT NULL,
      PRIMARY KEY (layout_id, points_id)
    );
    CREATE TABLE nodes (
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      node_id text NOT NULL,
      name text NOT NULL,
      detectors jsonb NOT NULL DEFAULT '[]',
      signals jsonb NOT NULL DEFAULT '[]',
      -- bcrypt hash of the board's MQTT password; NULL until a secret is issued
      secret_hash text,
      position integer NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      PRIMARY KEY (layout_id, node_id)
    );

    CREATE TABLE rulebook_versions (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      version integer NOT NULL,
      status text NOT NULL CHECK (status IN ('draft','proved','published')),
      rulebook jsonb NOT NULL,
      proof jsonb,
      note text,
      author_id integer REFERENCES users(id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      published_at timestamptz,
      UNIQUE (layout_id, version)
    );

    CREATE TABLE sessions (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      rulebook_version integer,
      opened_at timestamptz NOT NULL DEFAULT now(),
      closed_at timestamptz,
      opened_by integer REFERENCES users(id) ON DELETE SET NULL,
      close_reason text
    );
    CREATE INDEX sessions_layout_opened ON sessions (layout_id, opened_at DESC);

    -- Every MQTT message about a pulse, status or lamp proving, every tick and command:
    -- the session's event log. Nothing a board sent is dropped, rejected ones included.
    CREATE TABLE events (
      id bigserial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      session_id integer REFERENCES sessions(id) ON DELETE SET NULL,
      kind text NOT NULL CHECK (kind IN ('pulse','tick','status','shown','command')),
      status text NOT NULL CHECK (status IN ('accepted','duplicate','rejected')),
      reason text,
      node_id text,
      boot text,
      seq bigint,
      detector text,
      received_at timestamptz NOT NULL,
      board_t bigint,
      topic text,
      raw_payload text,
      -- commands: who and why (the audit table keeps the full record)
      user_id integer REFERENCES users(id) ON DELETE SET NULL,
      input jsonb
    );
    CREATE INDEX events_session_order ON events (session_id, id);
    CREATE INDEX events_layout_time ON events (layout_id, received_at);
    -- A pulse is applied at most once per (node, boot, seq): CONTRACT.md §2.
    CREATE UNIQUE INDEX events_pulse_once ON events (layout_id, node_id, boot, seq)
      WHERE kind = 'pulse' AND status = 'accepted';

    CREATE TABLE changes (
      id bigserial PRIMARY KEY,
      event_id bigint NOT NULL REFERENCES events(id) ON DELETE CASCADE,
      kind text NOT NULL,
      name text NOT NULL,
      from_value jsonb,
      to_value jsonb,
      rule text,
      command text,
      detail text
    );
    CREATE INDEX changes_event ON changes (event_id);

    CREATE TABLE snapshots (
      id bigserial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      session_id integer REFERENCES sessions(id) ON DELETE CASCADE,
      rulebook_version integer NOT NULL,
      last_event_id bigint NOT NULL,
      state jsonb NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX snapshots_layout_latest ON snapshots (layout_id, last_event_id DESC);

    CREATE TABLE alarms (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      session_id integer REFERENCES sessions(id) ON DELETE SET NULL,
      kind text NOT NULL,
      subject text,
      message text NOT NULL,
      event_id bigint REFERENCES events(id) ON DELETE SET NULL,
      raised_at timestamptz NOT NULL DEFAULT now(),
      acknowledged_at timestamptz,
      acknowledged_by integer REFERENCES users(id) ON DELETE SET NULL,
      ack_comment text,
      cleared_at timestamptz
    );
    CREATE INDEX alarms_layout_open ON alarms (layout_id, raised_at DESC);

    CREATE TABLE audit_entries (
      id serial PRIMARY KEY,
      layout_id integer REFERENCES layouts(id) ON DELETE CASCADE,
      user_id integer REFERENCES users(id) ON DELETE SET NULL,
      action text NOT NULL,
      target text,
      reason text,
      before jsonb,
      after jsonb,
      at timestamptz NOT NULL DEFAULT now()
    );
    CREATE INDEX audit_layout_time ON audit_entries (layout_id, at DESC);

    CREATE TABLE display_links (
      id serial PRIMARY KEY,
      layout_id integer NOT NULL REFERENCES layouts(id) ON DELETE CASCADE,
      -- sha256 of the token: the token itself is shown once, like a node secret
      token_hash text NOT NULL UNIQUE,
      label text,
      created_by integer REFERENCES users(id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      revoked_at timestamptz
    );

    CREATE TABLE invitations (
      id serial PRIMARY KEY,
      email text NOT NULL,
      role text NOT NULL,
      token_hash text NOT NULL UNIQUE,
      invited_by integer REFERENCES users(id) ON DELETE SET NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      expires_at timestamptz NOT NULL,
      accepted_at timestamptz
    );

    CREATE TABLE mail_outbox (
      id serial PRIMARY KEY,
      to_address text NOT NULL,
      subject text NOT NULL,
      body_text text NOT NULL,
      created_at timestamptz NOT NULL DEFAULT now(),
      sent_at timestamptz,
      error text
    );
  `);
};

export const down: MigrationFn<Sequelize> = async ({ context: sequelize }) => {
  await sequelize.query(`
    DROP TABLE IF EXISTS mail_outbox, invitations, display_links, audit_entries, alarms, snapshots,
      changes, events, sessions, rulebook_versions, nodes, points, signals, detectors, lines, layouts, users CASCADE;
  `);
};
