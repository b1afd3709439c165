// The `manyfield` command, built on the api handler map. Errors go to stderr with a
// non-zero exit code; a failed command writes nothing.
import { compactAnalysisJson } from './analysisJson.js';
import { existsSync, readFileSync, renameSync, statSync, writeFileSync, rmSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { JsonShapeError, MAX_JSON_FILE_BYTES, parseBoundedJson } from '../intake/jsonInput.js';
import { api, type HandlerArgs, type HandlerResults } from '../api/handlers.js';
import type { Result } from '../api/result.js';
import { APP_VERSION } from '../version.js';
import { optionsFor, parseArgs, UsageError } from './args.js';
import { toCsv } from './csv.js';
import { formatReport } from './formatReport.js';
import { formatTrials } from './formatTrials.js';
import { formatNetworkChecks } from './formatNetworkChecks.js';
import { commandHelp, USAGE } from './help.js';
import { formatExclusions, formatSites } from './formatSites.js';
import { terminalProgress } from './progressBar.js';
import { analyseInThisThread } from './analysisThread.js';

interface Output {
  readonly stdout: string[];
}

/** Longest message written to stderr: a hostile value must not come back as megabytes of text. */
const MAX_MESSAGE_CHARS = 4000;

/** Exit code of a command stopped by Ctrl-C (128 + SIGINT), as shells report it. */
const EXIT_CANCELLED = 130;

function writeError(message: string): void {
  const shown = message.length > MAX_MESSAGE_CHARS ? `${message.slice(0, MAX_MESSAGE_CHARS)}... (message cut at ${MAX_MESSAGE_CHARS} of ${message.length} characters)` : message;
  process.stderr.write(`manyfield: ${shown}\n`);
}

/** A reader that stopped reading (`manyfield analyze --json | head -1`) ends the command quietly. */
function quietOnClosedPipe(): void {
  const onError = (e: NodeJS.ErrnoException): void => {
    if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
    throw e;
  };
  if (process.stdout.listenerCount('error') === 0) process.stdout.on('error', onError);
}

export async function main(argv: readonly string[]): Promise<number> {
  const out: Output = { stdout: [] };
  quietOnClosedPipe();
  try {
    const parsed = parseArgs(argv);
    if (parsed.command === 'version' || parsed.options.version) {
      process.stdout.write(`${APP_VERSION}\n`);
      return 0;
    }
    if (parsed.command === null || parsed.command === 'help' || parsed.options.help) {
      process.stdout.write(`${(parsed.command !== null && commandHelp(parsed.command)) || USAGE}\n`);
      return 0;
    }
    const code = await runCommand(parsed.command, parsed, out);
    if (out.stdout.length > 0) process.stdout.write(out.stdout.join(''));
    return code;
  } catch (e) {
    if (e instanceof UsageError) {
      const command = argv.find((a) => !a.startsWith('-'));
      const helpFor = command !== undefined && commandHelp(command) !== null ? `manyfield ${command} --help` : 'manyfield --help';
      process.stderr.write(`manyfield: ${e.message}\nRun "${helpFor}" for what it accepts.\n`);
      return 2;
    }
    writeError((e as Error).message);
    return 1;
  }
}

async function runCommand(command: string, parsed: ReturnType<typeof parseArgs>, out: Output): Promise<number> {
  switch (command) {
    case 'demo': {
      const o = optionsFor(command, parsed, { values: ['workspace'], flags: ['replace', 'json'] });
      const progress = terminalProgress();
      const r = await api['demo.build']({ workspace: o.required('workspace'), replace: o.flag('replace') }, { onProgress: progress.onProgress });
      progress.done();
      return report(r, (d) => (o.flag('json') ? json(d) : `Built ${d.network}: ${d.trials} trials at ${d.sites} sites over ${d.years.join(', ')} (${d.plots} plots) in ${d.workspace}\n`), out);
    }
    case 'import': {
      const o = optionsFor(command, parsed, { values: ['workspace', 'file', 'map'], flags: ['replace', 'json'] });
      const progress = terminalProgress();
      const r = await api['data.import'](
        { workspace: o.required('workspace'), file: o.required('file'), mapping: o.required('map'), replace: o.flag('replace') },
        { onProgress: progress.onProgress },
      );
      progress.done();
      if (r.ok) for (const w of [...r.data.notes, ...r.data.warnings]) process.stderr.write(`manyfield: warning: ${w}\n`);
      return report(r, (d) => (o.flag('json') ? json(d) : `Imported ${d.file} into ${d.workspace}${d.created ? ' (new workspace)' : ''}: ${describeSummary(d.summary)}${d.warnings.length ? `; ${d.warnings.length} value${d.warnings.length > 1 ? 's' : ''} to check (listed above)` : ''}\n`), out);
    }
    case 'trials': {
      const o = optionsFor(command, parsed, { values: ['workspace', 'trait'], flags: ['json'] });
      const r = await api['trials.list']({ workspace: o.required('workspace') });
      const trait = o.value('trait');
      if (trait === undefined || !r.ok) return report(r, (d) => (o.flag('json') ? json(d) : formatTrials(d)), out);
      // With a trait, the network checks follow the list (JSON: both under one object).
      const checks = await api['trials.checks']({ workspace: o.required('workspace'), trait });
      return report(checks, (c) => (o.flag('json') ? json({ trials: r.data, checks: c }) : `${formatTrials(r.data)}${formatNetworkChecks(c)}`), out);
    }
    case 'sites': {
      const o = optionsFor(command, parsed, { values: ['workspace'], flags: ['json'] });
      const r = await api['sites.list']({ workspace: o.required('workspace') });
      return report(r, (d) => (o.flag('json') ? json(d) : formatSites(d)), out);
    }
    case 'exclude': {
      const o = optionsFor(command, parsed, { values: ['workspace', 'plot', 'reason'], flags: ['json'] });
      const r = await api['plots.exclude']({ workspace: o.required('workspace'), plot: plotId(command, o.required('plot')), reason: o.required('reason') });
      return report(r, (d) => (o.flag('json') ? json(d) : `Plot ${d.plot} excluded: ${d.reason}\n`), out);
    }
    case 'include': {
      const o = optionsFor(command, parsed, { values: ['workspace', 'plot'], flags: ['json'] });
      const r = await api['plots.include']({ workspace: o.required('workspace'), plot: plotId(command, o.required('plot')) });
      return report(r, (d) => (o.flag('json') ? json(d) : `Plot ${d.plot} counts again\n`), out);
    }
    case 'exclusions': {
      const o = optionsFor(command, parsed, { values: ['workspace'], flags: ['json'] });
      const r = await api['exclusions.list']({ workspace: o.required('workspace') });
      return report(r, (d) => (o.flag('json') ? json(d) : formatExclusions(d)), out);
    }
    case 'export': {
      const o = optionsFor(command, parsed, { values: ['workspace', 'trait', 'out'], flags: [] });
      const target = o.required('out');
      const r = await api['data.export']({ workspace: o.required('workspace'), trait: o.required('trait') });
      return report(r, (d) => {
        writeAtomically(target, toCsv(d.header, d.rows));
        return `Wrote ${d.rows.length} plots to ${target}\n`;
      }, out);
    }
    case 'analyze': {
      const o = optionsFor(command, parsed, { values: ['spec', 'data', 'workspace', 'out', 'detail'], flags: ['json', 'no-save'] });
      const detail = o.value('detail') ?? 'summary';
      if (detail !== 'summary' && detail !== 'plots') throw new UsageError(`analyze: --detail is "summary" or "plots"; got "${detail}"`);
      const specPath = o.required('spec');
      const spec = readJson(specPath);
      const data = o.value('data');
      const workspace = o.value('workspace');
      if ((data === undefined) === (workspace === undefined)) throw new UsageError('analyze: give exactly one of --data and --workspace');
      const target = o.value('out');
      if (target !== undefined) checkOutputFolder(target);
      const progress = terminalProgress();
      const controller = new AbortController();
      const onSigint = () => controller.abort();
      const inThisThread = analyseInThisThread(data);
      if (!inThisThread) process.once('SIGINT', onSigint);
      // The output is rendered and written (to a temporary file beside the target) before the
      // workspace stores the analysis: if that fails, the handler fails and stores nothing.
      let text = '';
      let partial: string | null = null;
      const deliver = (d: unknown): void => {
        text = o.flag('json') ? json(compactAnalysisJson(d)) : formatReport(d as HandlerResults['analysis.run']);
        if (target !== undefined) partial = writePartial(target, text);
      };
      // The handler validates the spec with zod at the boundary; here it is still unchecked JSON.
      const r = await api['analysis.run']({ spec: spec as HandlerArgs<'analysis.run'>['spec'], data, workspace, save: !o.flag('no-save'), detail }, { onProgress: progress.onProgress, signal: inThisThread ? undefined : controller.signal, deliver });
      process.off('SIGINT', onSigint);
      progress.done();
      if (!r.ok) {
        if (partial !== null) rmSync(partial, { force: true });
        if (r.error.code === 'cancelled') {
          writeError(r.error.message);
          return EXIT_CANCELLED;
        }
        return report(r, () => '', out);
      }
      if (target !== undefined && partial !== null) {
        renameSync(partial, target);
        out.stdout.push(`Wrote the analysis to ${target}\n`);
      } else out.stdout.push(text);
      return 0;
    }
    case 'report': {
      const o = optionsFor(command, parsed, { values: ['spec', 'data', 'workspace', 'out', 'pdf', 'analysis'], flags: [] });
      const data = o.value('data');
      const workspace = o.value('workspace');
      if ((data === undefined) === (workspace === undefined)) throw new UsageError('report: give exactly one of --data and --workspace');
      const analysisText = o.value('analysis');
      const specPath = o.value('spec');
      if ((analysisText === undefined) === (specPath === undefined)) throw new UsageError('report: give exactly one of --spec and --analysis');
      const analysis = analysisText === undefined ? undefined : plotId(command, analysisText);
      const target = o.required('out');
      checkOutputFolder(target);
      const pdf = o.value('pdf');
      if (pdf !== undefined) checkOutputFolder(pdf);
      const progress = terminalProgress();
      const { buildReport } = await import('../api/report/buildReport.js');
      let built: Awaited<ReturnType<typeof buildReport>>;
      try {
        built = await buildReport({ workspace, data, spec: specPath === undefined ? undefined : readJson(specPath), analysis }, { onProgress: progress.onProgress });
      } finally {
        progress.done();
      }
      writeAtomically(target, built.html);
      out.stdout.push(`Wrote the report to ${target}\n`);
      if (built.reproduced === false) process.stderr.write(`manyfield: warning: the data changed since analysis ${analysis} was saved (fingerprints differ); the report says so\n`);
      if (pdf !== undefined) {
        const { printReportPdf } = await import('../report/pdf/printPdf.js');
        await printReportPdf(built.html, pdf, `Recommendation report: ${built.analysis.trait}`);
        out.stdout.push(`Printed the report to ${pdf}\n`);
      }
      return 0;
    }
    default:
      throw new UsageError(`unknown command "${command}"`);
  }
}

function plotId(command: string, text: string): number {
  const n = Number(text);
  if (!Number.isInteger(n) || n <= 0) throw new UsageError(`${command}: --plot must be a plot id (a whole number, as "manyfield exclusions" or the trial screen shows it); got "${text}"`);
  return n;
}

function report<T>(r: Result<T>, render: (d: T) => string, out: Output): number {
  if (!r.ok) {
    writeError(r.error.message);
    return 1;
  }
  out.stdout.push(render(r.data));
  return 0;
}

/** Documents up to this size are indented for reading; larger ones are written on one line. */
const INDENT_UP_TO = 1 << 20;

// JSON.stringify already writes NaN and ±Infinity as null; a replacer function for that would be
// called once per value of a megabyte-sized report for no change in the text. A large document
// (thousands of trials) is for programs: indentation would nearly double it.
function json(d: unknown): string {
  const flat = JSON.stringify(d);
  return `${flat.length <= INDENT_UP_TO ? JSON.stringify(d, null, 2) : flat}\n`;
}

function readJson(path: string): unknown {
  let text: string;
  try {
    const size = statSync(path).size;
    if (size > MAX_JSON_FILE_BYTES) throw new Error(`the spec file ${path} is ${size} bytes; a spec is a few kilobytes and at most ${MAX_JSON_FILE_BYTES} bytes are read — check that --spec names the spec, not the data`);
    text = readFileSync(path, 'utf8');
  } catch (e) {
    if ((e as Error).message.startsWith('the spec file')) throw e;
    throw new Error(`cannot read the spec file ${path}: ${(e as Error).message}`);
  }
  try {
    return parseBoundedJson(text.replace(/^\uFEFF/, ''));
  } catch (e) {
    if (e instanceof JsonShapeError) throw new Error(`the spec file ${path}: ${e.message}`);
    throw new Error(`the spec file ${path} is not valid JSON: ${(e as Error).message}`);
  }
}

/** Fails before any work when the output's folder is missing, so minutes of fitting are not lost. */
function checkOutputFolder(target: string): void {
  const folder = dirname(resolve(target));
  if (!existsSync(folder)) throw new Error(`cannot write ${target}: the folder ${folder} does not exist; nothing was analysed or stored`);
  if (existsSync(target) && statSync(target).isDirectory()) throw new Error(`cannot write ${target}: it is a folder; give a file name; nothing was analysed or stored`);
}

/** Writes the output beside its target; the caller renames it into place once all else succeeded. */
function writePartial(target: string, content: string): string {
  const tmp = `${target}.partial-${process.pid}`;
  try {
    writeFileSync(tmp, content);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw new Error(`cannot write ${target}: ${(e as Error).message}; nothing was stored`);
  }
  return tmp;
}

function writeAtomically(path: string, content: string): void {
  const tmp = `${path}.partial-${process.pid}`;
  try {
    writeFileSync(tmp, content);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
}

function describeSummary(summary: unknown): string {
  if (summary && typeof summary === 'object') {
    return Object.entries(summary as Record<string, unknown>)
      .filter(([, v]) => typeof v === 'number' || typeof v === 'string' || typeof v === 'boolean')
      .map(([k, v]) => `${k} ${String(v)}`)
      .join(', ');
  }
  return String(summary);
}
