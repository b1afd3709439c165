// Help for each command: `manyfield import --help` tells everything that command accepts.
import { APP_VERSION } from '../version.js';
import { mappingHelp, MISSING_VALUE_WORDS } from '../intake/mappingKeys.js';

export const USAGE = `manyfield ${APP_VERSION} — trials from many sites and years, one honest answer

Commands:
  demo     --workspace W [--replace]            build the invented demo network into W
  import   --workspace W --file F --map M.json [--replace]
                                                 load a plot file (CSV or XLSX) into W (created if new)
  trials   --workspace W [--trait T] [--json]   list the trials held in W (with T: network checks)
  sites    --workspace W [--json]               list the sites with position and covariates
  exclude  --workspace W --plot ID --reason "…"  set a plot aside (it stays stored; analyses skip it)
  include  --workspace W --plot ID              undo an exclusion
  exclusions --workspace W [--json]             list the excluded plots with their reasons
  export   --workspace W --trait T --out F.csv  write one trait's plots in long format
  analyze  --spec S.json (--data F | --workspace W) [--json] [--out FILE]
                                                 run the trial stage, pooling, the one-stage model
                                                 and the rate response the spec asks for
  report   (--spec S.json | --analysis ID) (--data F | --workspace W) --out R.html [--pdf R.pdf]
                                                 write the recommendation report (HTML, and PDF)

The spec (JSON) names the trait, contrasts, the one-stage model, pooling and the rate response;
the README lists every key. One-stage random terms are named in words: trial, block,
treatment-by-trial. Without --json, analyze prints a summary to read: the effect of each contrast
with its interval and unit, treatment means, each trial's effects and CV, moderators, one
recommended rate with the reason for it, warnings and cautions. --json prints every number.

"manyfield COMMAND --help" describes one command.
Exit codes: 0 done, 1 the operation failed (message on stderr), 2 the command line is wrong.`;

const COMMAND_HELP: Record<string, string> = {
  demo: `manyfield demo --workspace W [--replace] [--json]

Builds an invented demo network (14 sites x 3 years, nitrogen rate x timing) into W.
  --replace   overwrite W if it exists
  --json      print the summary as JSON`,

  import: `manyfield import --workspace W --file F --map M.json [--replace] [--json]

Loads a plot file (CSV or XLSX, one row per plot, or per plot and trait) into workspace W
(created when it does not exist). All or nothing: every problem of the file is listed with
its row and column and nothing is stored. Values far from the rest of their trial are kept
and listed as warnings.
  --replace   replace the batch imported earlier from the same file (same SHA-256)
  --json      print the summary as JSON

The mapping file M.json says which column is what:
  {"columns": {"site": "site", "year": "year", "block": "rep", "treatment": "trt",
               "plot": "plot", "response": "yield", "factors": {"rate": "N", "timing": "when"}},
   "trait": {"name": "yield", "unit": "t/ha"}, "control": "CTL", "factorUnits": {"rate": "kg/ha"}}

Every key:
${mappingHelp()}

Missing values: ${MISSING_VALUE_WORDS}.
The control's rate: a blank level of a numeric factor (a rate) is 0 for the control — it
received none of the input — unless controlLevels says otherwise; other blanks are "not
applicable".`,

  trials: `manyfield trials --workspace W [--trait T] [--json]

Lists the trials held in W: site, year, design, plots, treatments and traits.
With --trait, the network checks for that trait follow: treatments tested in one trial
only, trials that share no treatment with the rest (disconnected), and each trial's
range of every numeric factor (the amounts applied there).`,

  export: `manyfield export --workspace W --trait T --out F.csv

Writes one trait's plots in long format (site, year, trial, design, block, row, col,
treatment, plot label, factors, covariates, value), readable back by import.`,

  report: `manyfield report (--spec S.json | --analysis ID) (--data F | --workspace W) --out R.html [--pdf R.pdf]

Writes the recommendation report for a committee: one self-contained HTML file (no script,
no network) with the question, the data, the methods cited, each contrast's results with
its forest plot, the rate to recommend, diagnostics, cautions and provenance (the spec, the
data fingerprint and the imported files' SHA-256), and every trial in an appendix.
  --analysis ID  re-run a saved analysis of W (its spec) and check its data fingerprint
  --pdf R.pdf    also print it to PDF with Chromium (/usr/bin/chromium or MANYFIELD_CHROMIUM)
Nothing is stored in the workspace.`,

  analyze: `manyfield analyze --spec S.json (--data F | --workspace W) [--json] [--out FILE] [--no-save]

Runs the analysis the spec describes: each trial, pooling across trials, the one-stage
mixed model and the rate response. With --workspace the analysis is stored in W (unless
--no-save); a failed analysis stores nothing.
  --data F     a plot file; the spec's "columns" say which column is what, "reading" how to
               read it ({"decimalComma": true, "sheet": "Data", "delimiter": ";"})
  --json       print the whole result as JSON
  --out FILE   write the output to FILE instead of the screen

Exclusions ("exclude") name a plot by the field's own label, {"trial": "S1-2024",
"plot": "204", "reason": "hail"}, or explicitly by its file row, {"trial": ..., "row": 17, ...}.
The spec's keys are described in the README ("The analysis spec").`,
};

export function commandHelp(command: string): string | null {
  return COMMAND_HELP[command] ?? null;
}
