// Intake: choose a file, look at its first rows, map its columns, check it, see every problem,
// fix and check again, then import with progress (cancellable). A refused or cancelled import
// leaves the workspace as it was.
import { useEffect, useRef, useState } from 'react';
import type { OpenWorkspace } from '../app/App.js';
import { useHost } from '../app/hostContext.js';
import type { FilePreview, ValidationReport } from '../app/views.js';
import type { PickedFile } from '../host/types.js';
import { formFromGuess, formProblems, toMapping, type MappingForm as Form } from '../shape/mapping.js';
import { importFraction, progressText } from '../shape/progress.js';
import { plural } from '../shape/format.js';
import { MappingForm } from '../intake/MappingForm.js';
import { PreviewTable } from '../intake/PreviewTable.js';
import { ProblemTable } from '../intake/ProblemTable.js';

interface Props {
  readonly workspace: OpenWorkspace;
  readonly onImported: () => Promise<unknown>;
  readonly onShowNetwork: () => void;
}

type Outcome = { readonly kind: 'done' | 'refused' | 'cancelled'; readonly text: string };

export function IntakeScreen({ workspace, onImported, onShowNetwork }: Props) {
  const host = useHost();
  const [file, setFile] = useState<PickedFile | null>(null);
  const [preview, setPreview] = useState<FilePreview | null>(null);
  const [form, setForm] = useState<Form | null>(null);
  const [check, setCheck] = useState<{ report: ValidationReport; key: string } | null>(null);
  const [busy, setBusy] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [progress, setProgress] = useState<{ stage: string; fraction: number | null } | null>(null);
  const [outcome, setOutcome] = useState<Outcome | null>(null);
  const abort = useRef<AbortController | null>(null);
  const checkStep = useRef<HTMLLIElement>(null);
  // A finished check brings its step (buttons, verdict, problem table) into view.
  useEffect(() => {
    if (check) checkStep.current?.scrollIntoView({ block: 'start' });
  }, [check]);

  const mappingKey = form && file && preview ? JSON.stringify([file.ref, toMapping(form, preview.sheet)]) : '';
  const settle = form ? formProblems(form) : [];
  const checkedNow = check !== null && check.key === mappingKey;

  const load = async (picked: PickedFile, sheet?: string) => {
    setBusy('Reading the file');
    setError(null);
    setOutcome(null);
    setCheck(null);
    const r = await host.call('data.preview', sheet ? { file: picked.ref, sheet } : { file: picked.ref });
    setBusy(null);
    if (!r.ok) {
      setError(`${picked.name}: ${r.error.message}`);
      setPreview(null);
      return;
    }
    setFile(picked);
    setPreview(r.data);
    // Keep the user's choices when the same columns come back (a fixed file chosen again).
    setForm((old) => (old && sameHeader(preview, r.data) ? old : formFromGuess(r.data.header, r.data.guess)));
  };

  const chooseInPage = async (f: File | undefined) => {
    if (!f) return;
    try {
      setBusy('Sending the file');
      await load(await host.uploadDataFile(f));
    } catch (e) {
      setBusy(null);
      setError(`${f.name}: ${e instanceof Error ? e.message : String(e)}`);
    }
  };
  const chooseWithDialog = async () => {
    const picked = await host.pickDataFile();
    if (picked) await load(picked);
  };

  const validate = async () => {
    if (!file || !form || !preview) return;
    setBusy('Checking the file');
    setError(null);
    setOutcome(null);
    const key = mappingKey;
    const r = await host.call('data.validate', { workspace: workspace.path, file: file.ref, mapping: toMapping(form, preview.sheet) });
    setBusy(null);
    if (!r.ok) setError(r.error.message);
    else setCheck({ report: r.data, key });
  };

  const runImport = async () => {
    if (!file || !form || !preview) return;
    const controller = new AbortController();
    abort.current = controller;
    setOutcome(null);
    setError(null);
    setProgress({ stage: 'read', fraction: 0 });
    const r = await host.call(
      'data.import',
      { workspace: workspace.path, file: file.ref, mapping: toMapping(form, preview.sheet) },
      { signal: controller.signal, onProgress: (e) => setProgress({ stage: e.stage, fraction: e.fraction }) },
    );
    abort.current = null;
    setProgress(null);
    if (r.ok) {
      const s = r.data.summary;
      setOutcome({ kind: 'done', text: `Imported ${plural(s.trials, 'trial')}, ${plural(s.plots, 'plot')} and ${plural(s.observations, 'value')} from ${file.name}.${r.data.notes.map((n) => ` Note: ${n}`).join('')}` });
      setCheck(null);
      await onImported();
    } else if (r.error.code === 'cancelled') {
      setOutcome({ kind: 'cancelled', text: 'Import cancelled. Nothing was stored; the workspace is as it was.' });
    } else {
      setOutcome({ kind: 'refused', text: `Import refused: ${r.error.message.split('\n')[0]} Nothing was stored.` });
    }
  };

  const overall = progress ? importFraction(progress.stage, progress.fraction) : null;

  return (
    <section className="intake" data-testid="intake-screen" aria-labelledby="intake-title">
      <h1 id="intake-title">Intake</h1>
      <p className="lead">Add trials to “{workspace.info.name}” from a CSV or Excel (XLSX) file with one row per plot. Nothing is stored until the whole file passes the checks.</p>

      <ol className="steps">
        <li className="step">
          <h2>1. Choose the file</h2>
          <div className="row">
            {host.choosesFilesInPage ? (
              <label className="file-choice">
                <span>Plot file (CSV or XLSX)</span>
                <input type="file" accept=".csv,.xlsx,text/csv" data-testid="intake-file-input" onChange={(e) => chooseInPage(e.target.files?.[0])} disabled={busy !== null || progress !== null} />
              </label>
            ) : (
              <button type="button" onClick={chooseWithDialog} disabled={busy !== null || progress !== null}>
                Choose a file…
              </button>
            )}
            {preview && file ? (
              <p className="muted">
                <strong>{file.name}</strong>: {preview.format.toUpperCase()}, {preview.rowCount.toLocaleString('en-GB')} data rows, {preview.header.length} columns
              </p>
            ) : null}
            {preview && preview.sheets.length > 1 && file ? (
              <label className="field inline">
                <span>Sheet</span>
                <select value={preview.sheet ?? ''} onChange={(e) => load(file, e.target.value)}>
                  {preview.sheets.map((s) => (
                    <option key={s}>{s}</option>
                  ))}
                </select>
              </label>
            ) : null}
          </div>
          {preview ? <PreviewTable preview={preview} /> : null}
        </li>

        {preview && form ? (
          <li className="step">
            <h2 id="intake-mapping-title">2. Say what each column holds</h2>
            <MappingForm header={preview.header} form={form} onChange={setForm} />
          </li>
        ) : null}

        {preview && form ? (
          <li className="step" ref={checkStep}>
            <h2>3. Check, then import</h2>
            {settle.length > 0 ? (
              <ul className="to-settle">
                {settle.map((s) => (
                  <li key={s}>{s}</li>
                ))}
              </ul>
            ) : null}
            <div className="row">
              <button type="button" data-testid="validate-button" onClick={validate} disabled={busy !== null || progress !== null || settle.length > 0}>
                Check the file
              </button>
              <button type="button" className="primary" data-testid="import-button" onClick={runImport} disabled={!checkedNow || !check?.report.valid || progress !== null || busy !== null}>
                Import
              </button>
              {progress ? (
                <>
                  <div className="progress" data-testid="import-progress" role="status" data-fraction={overall ?? ''}>
                    <progress max={1} value={overall ?? undefined} aria-label="Import progress" />
                    <span>{progressText(progress.stage, progress.fraction)}</span>
                  </div>
                  <button type="button" data-testid="import-cancel" onClick={() => abort.current?.abort()}>
                    Cancel import
                  </button>
                </>
              ) : null}
            </div>
            {check && !checkedNow ? <p className="muted">The mapping or file changed since the last check: check again before importing.</p> : null}
            {check && checkedNow && file ? <CheckSummary report={check.report} fileName={file.name} /> : null}
          </li>
        ) : null}
      </ol>

      {busy ? (
        <p className="status" role="status">
          {busy}…
        </p>
      ) : null}
      {error ? (
        <p className="status status-error" role="alert">
          {error}
        </p>
      ) : null}
      {outcome ? (
        <div className={`banner ${outcome.kind === 'done' ? 'banner-ok' : 'banner-warn'}`} role="status" data-testid="import-outcome">
          <span>{outcome.text}</span>
          {outcome.kind === 'done' ? (
            <button type="button" className="small" onClick={onShowNetwork}>
              Show the network
            </button>
          ) : null}
        </div>
      ) : null}
    </section>
  );
}

function CheckSummary({ report, fileName }: { report: ValidationReport; fileName: string }) {
  const s = report.summary;
  if (report.valid)
    return (
      <p className="banner banner-ok" role="status" data-testid="validation-ok">
        {fileName} passes every check: {plural(s.trials, 'trial')} at {plural(s.sites, 'site')}, {plural(s.plots, 'plot')}, {s.traits.length === 1 ? 'trait' : 'traits'} {s.traits.join(', ')}. Ready to import.
      </p>
    );
  return (
    <div className="problems">
      <p className="banner banner-error" role="alert">
        {fileName}: {report.problems.length}
        {report.truncated ? '+' : ''} {report.problems.length === 1 ? 'problem' : 'problems'} found. Fix the file (then choose it again) or the mapping, and check again. Nothing has been stored.
      </p>
      <ProblemTable problems={report.problems} truncated={report.truncated} />
    </div>
  );
}

function sameHeader(a: FilePreview | null, b: FilePreview): boolean {
  return a !== null && a.header.length === b.header.length && a.header.every((h, i) => h === b.header[i]);
}
