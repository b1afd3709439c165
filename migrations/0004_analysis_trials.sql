-- Per-trial results of a saved analysis, one row per trial, so the screens can page through a
-- large analysis and open one trial without reading the rest. `summary_json` is the trial's
-- compact result (contrasts, means, ANOVA rows, flags, diagnostic summaries); `data_sha256`
-- identifies the trial's data as analysed, so its per-plot detail can be recomputed on demand
-- and checked against what was analysed. Analyses saved before this table keep their trials
-- inside their 'twoStage' analysis_result row and are read from there.
CREATE TABLE analysis_trial (
  id           INTEGER PRIMARY KEY,
  analysis_id  INTEGER NOT NULL REFERENCES analysis(id) ON DELETE CASCADE,
  position     INTEGER NOT NULL,
  trial        TEXT NOT NULL,
  data_sha256  TEXT,
  summary_json TEXT NOT NULL,
  UNIQUE (analysis_id, trial),
  UNIQUE (analysis_id, position)
);
