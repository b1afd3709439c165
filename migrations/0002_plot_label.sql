-- The field's own plot labels (the plot column of the file: "204", "R2-P17"), so flags, exports
-- and exclusions speak the user's language and a spec with exclusions works on any workspace
-- built from the same files. NULL = the file had no plot column (the plot is then named by its
-- file row, plot.source_row).
ALTER TABLE plot ADD COLUMN label TEXT;

-- One stated rule for the untreated control (README, "The control's rate"): it received none of
-- the input, so a blank level of a numeric factor means 0 for the protocol's control. Earlier
-- imports stored that blank as "not applicable"; they now follow the rule, so files written
-- either way agree. (The migration runner backs the workspace up before this runs.)
UPDATE treatment_level
SET value_num = 0
WHERE value_num IS NULL AND value_text IS NULL
  AND factor_id IN (SELECT id FROM factor WHERE kind = 'numeric')
  AND treatment_id IN (
    SELECT t.id FROM treatment t JOIN protocol p ON p.id = t.protocol_id
    WHERE p.control_code IS NOT NULL AND t.code = p.control_code
  );
