// The `manyfield` command, built on the api handler map. Errors go to stderr with a
// non-zero exit code; a failed command writes nothing.
import { readFileSync, renameSync, writeFileSync, rmSync } from 'node:fs';
import { api, type HandlerArgs } from '../api/handlers.js';
import type { Result } from '../api/result.js';
import { APP_VERSION } from '../version.js';
import { optionsFor, parseArgs, UsageError } from './args.js';
import { toCsv } from './csv.js';
import { formatReport } from './formatReport.js';
import { formatTrials } from './formatTrials.js';
import { terminalProgress } from './progressBar.js';

const USAGE = `manyfield ${APP_VERSION} — trials from many sites and years, one honest answer

Commands:
  demo     --workspace W [--replace]            build the invented demo network into W
  import   --workspace W --file F --map M.json [--replace]
                                                 load a plot file (CSV or XLSX) into W (created if new)
  trials   --workspace W [--json]               list the trials held in W
  export   --workspace W --trait T --out F.csv  write one trait's plots in long format
  analyze  --spec S.json (--data F | --workspace W) [--json] [--detail plots] [--out FILE]
                                                 run the trial stage, pooling, the one-stage model
                                                 and the rate response the spec asks for; per trial
                                                 a summary, or with --detail plots every trial's
                                                 full analysis with its per-plot diagnostics

Exit codes: 0 done, 1 the operation failed (message on stderr), 2 the command line is wrong.`;

interface Output {
  readonly stdout: string[];
}

export async function main(argv: readonly string[]): Promise<number> {
  const out: Output = { stdout: [] };
  try {
    const parsed = parseArgs(argv);
    if (parsed.command === 'version' || parsed.options.version) {
      process.stdout.write(`${APP_VERSION}\n`);
      return 0;
    }
    if (parsed.command === null || parsed.command === 'help' || parsed.options.help) {
      process.stdout.write(`${USAGE}\n`);
      return 0;
    }
    const code = await runCommand(parsed.command, parsed, out);
    if (out.stdout.length > 0) process.stdout.write(out.stdout.join(''));
    return code;
  } catch (e) {
    if (e instanceof UsageError) {
      process.stderr.write(`manyfield: ${e.message}\nRun "manyfield --help" for the commands.\n`);
      return 2;
    }
    process.stderr.write(`manyfield: ${(e as Error).message}\n`);
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
      return report(r, (d) => (o.flag('json') ? json(d) : `Imported ${d.file} into ${d.workspace}${d.created ? ' (new workspace)' : ''}: ${describeSummary(d.summary)}\n`), out);
    }
    case 'trials': {
      const o = optionsFor(command, parsed, { values: ['workspace'], flags: ['json'] });
      const r = await api['trials.list']({ workspace: o.required('workspace') });
      return report(r, (d) => (o.flag('json') ? json(d) : formatTrials(d)), out);
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
      const progress = terminalProgress();
      const controller = new AbortController();
      const onSigint = () => controller.abort();
      process.once('SIGINT', onSigint);
      // The handler validates the spec with zod at the boundary; here it is still unchecked JSON.
      const r = await api['analysis.run']({ spec: spec as HandlerArgs<'analysis.run'>['spec'], data, workspace, save: !o.flag('no-save'), detail }, { onProgress: progress.onProgress, signal: controller.signal });
      process.off('SIGINT', onSigint);
      progress.done();
      const target = o.value('out');
      return report(r, (d) => {
        const text = o.flag('json') ? json(d) : formatReport(d);
        if (target) {
          writeAtomically(target, text);
          return `Wrote the analysis to ${target}\n`;
        }
        return text;
      }, out);
    }
    default:
      throw new UsageError(`unknown command "${command}"`);
  }
}

function report<T>(r: Result<T>, render: (d: T) => string, out: Output): number {
  if (!r.ok) {
    process.stderr.write(`manyfield: ${r.error.message}\n`);
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
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw new Error(`cannot read the spec file ${path}: ${(e as Error).message}`);
  }
  try {
    return JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (e) {
    throw new Error(`the spec file ${path} is not valid JSON: ${(e as Error).message}`);
  }
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
