-- Manyfield workspace, first schema (DESIGN §4). Never edit once landed: add a new numbered file.

-- Free-form workspace facts as JSON (the demo stores its true parameter values here).
CREATE TABLE workspace_meta (
  key        TEXT PRIMARY KEY,
  value_json TEXT NOT NULL
);

CREATE TABLE site (
  id     INTEGER PRIMARY KEY,
  code   TEXT NOT NULL UNIQUE,
  name   TEXT,
  region TEXT,
  lat    REAL CHECK (lat IS NULL OR (lat BETWEEN -90 AND 90)),
  lon    REAL CHECK (lon IS NULL OR (lon BETWEEN -180 AND 180))
);

-- Fixed site properties (soil pH, organic matter, long-term rainfall ...): one value per name.
CREATE TABLE site_covariate (
  site_id    INTEGER NOT NULL REFERENCES site(id) ON DELETE CASCADE,
  name       TEXT NOT NULL,
  value_num  REAL,
  value_text TEXT,
  unit       TEXT,
  PRIMARY KEY (site_id, name),
  CHECK (value_num IS NULL OR value_text IS NULL)
) WITHOUT ROWID;

-- The shared treatment structure of a network.
CREATE TABLE protocol (
  id           INTEGER PRIMARY KEY,
  name         TEXT NOT NULL UNIQUE,
  control_code TEXT
);

CREATE TABLE factor (
  id          INTEGER PRIMARY KEY,
  protocol_id INTEGER NOT NULL REFERENCES protocol(id) ON DELETE CASCADE,
  name        TEXT NOT NULL,
  kind        TEXT NOT NULL CHECK (kind IN ('numeric', 'categorical')),
  unit        TEXT,
  position    INTEGER NOT NULL,
  UNIQUE (protocol_id, name)
);

CREATE TABLE treatment (
  id          INTEGER PRIMARY KEY,
  protocol_id INTEGER NOT NULL REFERENCES protocol(id) ON DELETE CASCADE,
  code        TEXT NOT NULL,
  label       TEXT,
  UNIQUE (protocol_id, code)
);

-- Level of one factor in one treatment: a number, a label, or both NULL = not applicable
-- (the timing of an untreated control).
CREATE TABLE treatment_level (
  treatment_id INTEGER NOT NULL REFERENCES treatment(id) ON DELETE CASCADE,
  factor_id    INTEGER NOT NULL REFERENCES factor(id) ON DELETE CASCADE,
  value_num    REAL,
  value_text   TEXT,
  PRIMARY KEY (treatment_id, factor_id),
  CHECK (value_num IS NULL OR value_text IS NULL)
) WITHOUT ROWID;

CREATE TABLE import_batch (
  id           INTEGER PRIMARY KEY,
  file_name    TEXT NOT NULL,
  sha256       TEXT NOT NULL UNIQUE CHECK (length(sha256) = 64),
  rows_read    INTEGER NOT NULL CHECK (rows_read >= 0),
  rows_stored  INTEGER NOT NULL CHECK (rows_stored >= 0),
  created_at   TEXT NOT NULL,
  mapping_json TEXT NOT NULL
);

-- One trial = one site-year experiment. key is the file's trial identifier; label is the
-- workspace-wide unique name shown to users and handed to the engine.
CREATE TABLE trial (
  id              INTEGER PRIMARY KEY,
  site_id         INTEGER NOT NULL REFERENCES site(id),
  year            INTEGER NOT NULL,
  crop            TEXT,
  design          TEXT NOT NULL CHECK (design IN ('completely-randomised', 'randomised-blocks', 'latin-square', 'row-column')),
  layout_notes    TEXT,
  protocol_id     INTEGER NOT NULL REFERENCES protocol(id),
  import_batch_id INTEGER REFERENCES import_batch(id) ON DELETE CASCADE,
  key             TEXT NOT NULL,
  label           TEXT NOT NULL UNIQUE,
  UNIQUE (site_id, year, key)
);
CREATE INDEX trial_by_batch ON trial(import_batch_id);
CREATE INDEX trial_by_protocol ON trial(protocol_id);

CREATE TABLE trial_covariate (
  trial_id   INTEGER NOT NULL REFERENCES trial(id) ON DELETE CASCADE,
  name       TEXT NOT NULL,
  value_num  REAL,
  value_text TEXT,
  unit       TEXT,
  PRIMARY KEY (trial_id, name),
  CHECK (value_num IS NULL OR value_text IS NULL)
) WITHOUT ROWID;

CREATE TABLE plot (
  id               INTEGER PRIMARY KEY,
  trial_id         INTEGER NOT NULL REFERENCES trial(id) ON DELETE CASCADE,
  treatment_id     INTEGER NOT NULL REFERENCES treatment(id),
  block            TEXT,
  row              INTEGER,
  col              INTEGER,
  excluded         INTEGER NOT NULL DEFAULT 0 CHECK (excluded IN (0, 1)),
  exclusion_reason TEXT,
  source_row       INTEGER,
  -- An exclusion always carries its reason.
  CHECK (excluded = 0 OR (exclusion_reason IS NOT NULL AND length(exclusion_reason) > 0))
);
CREATE INDEX plot_by_trial ON plot(trial_id);

CREATE TABLE trait (
  id    INTEGER PRIMARY KEY,
  name  TEXT NOT NULL UNIQUE,
  unit  TEXT NOT NULL,
  kind  TEXT NOT NULL CHECK (kind IN ('continuous', 'percent', 'count')),
  lower REAL,
  upper REAL,
  CHECK (lower IS NULL OR upper IS NULL OR lower <= upper)
);

-- value NULL = a missing plot for that trait. Rows are kept in plot order (plot_id first) so
-- that bulk imports append and a trial's values are read with one range scan.
CREATE TABLE observation (
  plot_id  INTEGER NOT NULL REFERENCES plot(id) ON DELETE CASCADE,
  trait_id INTEGER NOT NULL REFERENCES trait(id),
  value    REAL,
  PRIMARY KEY (plot_id, trait_id)
) WITHOUT ROWID;

CREATE TABLE analysis (
  id               INTEGER PRIMARY KEY,
  spec_json        TEXT NOT NULL,
  data_fingerprint TEXT NOT NULL,
  app_version      TEXT NOT NULL,
  created_at       TEXT NOT NULL,
  status           TEXT NOT NULL CHECK (status IN ('running', 'complete', 'failed', 'cancelled'))
);

CREATE TABLE analysis_result (
  id           INTEGER PRIMARY KEY,
  analysis_id  INTEGER NOT NULL REFERENCES analysis(id) ON DELETE CASCADE,
  kind         TEXT NOT NULL,
  payload_json TEXT NOT NULL,
  UNIQUE (analysis_id, kind)
);
