// Writing the recommendation report of a saved analysis from the screens: the core re-runs the
// saved spec in its worker (progress, cancel) and answers the HTML; it comes back as a file
// (a download in the browser mode, a save dialog on the desktop). The PDF comes with it when the
// browser mode's server can print with Chromium, or from the desktop shell's own print engine.
import { useRef, useState } from 'react';
import type { Host } from '../host/types.js';
import { progressText } from '../shape/progress.js';

export interface ReportJob {
  readonly analysis: number;
  readonly stage: string;
  readonly fraction: number | null;
}

export interface ReportWriter {
  readonly job: ReportJob | null;
  /** What the last report produced or why it failed. */
  readonly outcome: { readonly ok: boolean; readonly text: string } | null;
  write(analysis: number): Promise<void>;
  cancel(): void;
}

function base64Bytes(b64: string): Uint8Array<ArrayBuffer> {
  const text = atob(b64);
  const bytes = new Uint8Array(text.length);
  for (let i = 0; i < text.length; i++) bytes[i] = text.charCodeAt(i);
  return bytes;
}

export function useReportWriter(host: Host, workspace: string): ReportWriter {
  const [job, setJob] = useState<ReportJob | null>(null);
  const [outcome, setOutcome] = useState<ReportWriter['outcome']>(null);
  const abort = useRef<AbortController | null>(null);

  const write = async (analysis: number): Promise<void> => {
    const controller = new AbortController();
    abort.current = controller;
    setOutcome(null);
    setJob({ analysis, stage: 'starting', fraction: null });
    try {
      const r = await host.call('report.build', { workspace, analysis, pdf: host.kind === 'browser' }, { signal: controller.signal, onProgress: (e) => setJob({ analysis, stage: e.stage, fraction: e.fraction ?? null }) });
      if (!r.ok) {
        setOutcome({ ok: false, text: controller.signal.aborted ? 'The report was cancelled.' : `The report could not be written: ${r.error.message}` });
        return;
      }
      const { html, fileStem, reproduced } = r.data;
      await host.saveFile(`${fileStem}.html`, new Blob([html], { type: 'text/html' }));
      let pdf: Uint8Array<ArrayBuffer> | null = r.data.pdf ? base64Bytes(r.data.pdf) : null;
      let pdfProblem = r.data.pdfProblem;
      if (pdf === null && host.printReport) {
        setJob({ analysis, stage: 'report-print', fraction: null });
        try {
          pdf = await host.printReport(html);
        } catch (e) {
          pdfProblem = (e as Error).message;
        }
      }
      if (pdf !== null) await host.saveFile(`${fileStem}.pdf`, new Blob([pdf], { type: 'application/pdf' }));
      const files = pdf !== null ? `${fileStem}.html and ${fileStem}.pdf` : `${fileStem}.html`;
      const noPdf = pdf === null ? ` No PDF: ${pdfProblem ?? 'this window cannot print one'}; open the HTML in a browser and print it from there.` : '';
      const changed = reproduced === false ? ' The data changed since the analysis was saved: the report says so in its provenance.' : '';
      setOutcome({ ok: true, text: `Report written: ${files}.${noPdf}${changed}` });
    } finally {
      abort.current = null;
      setJob(null);
    }
  };

  return { job, outcome, write, cancel: () => abort.current?.abort() };
}

export function ReportProgress({ writer }: { writer: ReportWriter }) {
  const { job, outcome } = writer;
  if (job) {
    return (
      <div className="run-bar" data-testid="report-progress">
        <progress max={1} value={job.fraction ?? undefined} aria-label="Report progress" />
        <span role="status">
          Report of analysis {job.analysis}: {progressText(job.stage, job.fraction)}
        </span>
        <button type="button" onClick={writer.cancel}>
          Cancel the report
        </button>
      </div>
    );
  }
  if (!outcome) return null;
  return (
    <p className={`banner ${outcome.ok ? 'banner-ok' : 'banner-error'}`} role={outcome.ok ? 'status' : 'alert'} data-testid="report-outcome">
      {outcome.text}
    </p>
  );
}
