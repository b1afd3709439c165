// The report of a saved analysis for the screens (handler report.build): the HTML always, and
// the PDF when asked and a Chromium is at hand to print it (the browser mode's server, or the
// command's machine). Runs in the job worker: progress by stage, and a cancel stops it between
// stages (the analysis itself stops at once; see ../analysis/cancellable.ts).
import { throwIfCancelled, type CallContext } from '../context.js';
import { buildReport } from './buildReport.js';

export interface AppReport {
  readonly html: string;
  /** False when the data changed since the analysis was saved (the report says so too). */
  readonly reproduced: boolean | null;
  /** A file name without extension: trait and analysis number. */
  readonly fileStem: string;
  /** The PDF as base64, when asked for and printed. */
  readonly pdf: string | null;
  /** Why no PDF came back although one was asked for. */
  readonly pdfProblem: string | null;
}

export function reportFileStem(trait: string, analysis: number): string {
  const safe = trait.replace(/[^\w.-]+/g, '-').replace(/^-+|-+$/g, '') || 'analysis';
  return `${safe}-analysis-${analysis}-report`;
}

export async function reportForApp(args: { workspace: string; analysis: number; pdf?: boolean }, ctx?: CallContext): Promise<AppReport> {
  const built = await buildReport({ workspace: args.workspace, analysis: args.analysis }, ctx);
  throwIfCancelled(ctx);
  const fileStem = reportFileStem(built.analysis.trait, args.analysis);
  const base = { html: built.html, reproduced: built.reproduced, fileStem };
  if (!args.pdf) return { ...base, pdf: null, pdfProblem: null };
  ctx?.onProgress?.({ stage: 'report-print', fraction: null });
  const { printReportPdfBytes } = await import('../../report/pdf/printPdf.js');
  try {
    const printed = await printReportPdfBytes(built.html, `Recommendation report: ${built.analysis.trait}`);
    throwIfCancelled(ctx);
    return { ...base, pdf: Buffer.from(printed.pdf).toString('base64'), pdfProblem: null };
  } catch (e) {
    throwIfCancelled(ctx);
    return { ...base, pdf: null, pdfProblem: (e as Error).message };
  }
}
