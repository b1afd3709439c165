// Child process of bench:full: opens a saved analysis through the api handler map (the built
// dist/, as the desktop app's worker loads it) and times the summary, a page of trials and one
// trial's detail. Prints "BENCH {json}" to stderr.
import { api } from '../../dist/api/handlers.js';

const [workspace, analysis, trial] = process.argv.slice(2);
const id = Number(analysis);
const time = async (f) => {
  const t0 = performance.now();
  const r = await f();
  if (!r.ok) throw new Error(r.error.message);
  return { ms: performance.now() - t0, data: r.data };
};
const list = await time(() => api['analysis.list']({ workspace }));
const first = await time(() => api['analysis.open']({ workspace, analysis: id }));
const open = await time(() => api['analysis.open']({ workspace, analysis: id }));
const tables = await time(() => api['analysis.open']({ workspace, analysis: id, tables: true }));
const page = await time(() => api['analysis.open']({ workspace, analysis: id, trials: { offset: 0, limit: 100 } }));
const detail = await time(() => api['analysis.trial']({ workspace, analysis: id, trial }));
const detail2 = await time(() => api['analysis.trial']({ workspace, analysis: id, trial }));
process.stderr.write(
  `BENCH ${JSON.stringify({
    listMs: list.ms,
    openFirstMs: first.ms,
    openMs: open.ms,
    pageMs: page.ms,
    tablesMs: tables.ms,
    detailMs: detail.ms,
    detailAgainMs: detail2.ms,
    detailPlots: detail.data.detail.diagnostics.plots.length,
    trialCount: open.data.results.twoStage.trialCount,
  })}\n`,
);
