// Projects connected to their git host, for the pull-request feedback (docs/server.md, "Git
// hosts"): where the host is, the token encrypted at rest, the last outcome of talking to it, and
// the one summary comment per pull/merge request that every later push edits.
import type { Migration } from './types';

const ts = 'timestamptz(3)';

export const up: Migration = async ({ context: sequelize }) => {
  await sequelize.query(`
CREATE TABLE host_connections (
  project_id integer PRIMARY KEY REFERENCES projects(id) ON DELETE CASCADE,
  kind text NOT NULL CHECK (kind IN ('github', 'gitlab')),
  api_url text NOT NULL,
  repository text NOT NULL,
  -- AES-256-GCM under PLEAT_SECRET_KEY: 'v1:' and the base64 of nonce, tag and ciphertext.
  token_sealed text NOT NULL,
  -- The token's last 4 characters, so a lead can tell which token is stored.
  token_last4 text NOT NULL,
  updated_by integer REFERENCES users(id) ON DELETE SET NULL,
  created_at ${ts} NOT NULL DEFAULT now(),
  updated_at ${ts} NOT NULL DEFAULT now(),
  last_ok_at ${ts},
  last_error text,
  last_error_at ${ts}
);

-- The summary comment of one pull/merge request, edited on every push, and the run it shows (an
-- older run finishing late does not overwrite a newer one's comment).
CREATE TABLE host_comments (
  project_id integer NOT NULL REFERENCES projects(id) ON DELETE CASCADE,
  number integer NOT NULL,
  comment_id text NOT NULL,
  run_id integer REFERENCES runs(id) ON DELETE SET NULL,
  run_created_at ${ts},
  updated_at ${ts} NOT NULL DEFAULT now(),
  PRIMARY KEY (project_id, number)
);
`);
};

export const down: Migration = async ({ context: sequelize }) => {
  await sequelize.query('DROP TABLE IF EXISTS host_comments, host_connections CASCADE;');
};
