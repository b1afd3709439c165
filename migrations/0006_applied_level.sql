-- The amount of a numeric factor actually applied in one trial, where it differs from the
-- treatment's level in the protocol (a treatment coded by level number, N1 N2 …, with a
-- site-specific amount). One row per trial, treatment and factor that differ; a trial with no
-- row applied the protocol's levels. Trends and rate responses read these. Workspaces made
-- before this table could not hold such files (import refused them), so nothing is filled in.
CREATE TABLE trial_applied_level (
  trial_id     INTEGER NOT NULL REFERENCES trial(id) ON DELETE CASCADE,
  treatment_id INTEGER NOT NULL REFERENCES treatment(id) ON DELETE CASCADE,
  factor_id    INTEGER NOT NULL REFERENCES factor(id) ON DELETE CASCADE,
  value_num    REAL NOT NULL,
  PRIMARY KEY (trial_id, treatment_id, factor_id)
) WITHOUT ROWID;
