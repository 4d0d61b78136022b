-- Registry base: the labs that share one registry.
CREATE EXTENSION IF NOT EXISTS pgcrypto;

CREATE TABLE labs (
  id          UUID PRIMARY KEY DEFAULT gen_random_uuid(),
  code        TEXT NOT NULL,
  name        TEXT NOT NULL,
  time_zone   TEXT NOT NULL,
  version     INTEGER NOT NULL DEFAULT 1,
  created_at  TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  updated_at  TIMESTAMPTZ(3) NOT NULL DEFAULT now(),
  CONSTRAINT labs_code_format CHECK (code ~ '^[A-Z0-9][A-Z0-9-]{1,31}$'),
  CONSTRAINT labs_name_length CHECK (char_length(name) BETWEEN 1 AND 200),
  CONSTRAINT labs_version_positive CHECK (version >= 1)
);
CREATE UNIQUE INDEX labs_code_key ON labs (code);
