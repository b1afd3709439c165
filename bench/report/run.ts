// bench:report — the recommendation report of a large network end to end, run once by hand:
//   npx tsx bench/report/run.ts [--trials 4000] [--bootstrap 200]
// A generated network of the DESIGN §5 example (bench/full/exampleNetwork.ts) is imported into a
// workspace, then `manyfield report --pdf` writes the HTML and prints the PDF. Printed: the time
// of each step, the HTML's size, the PDF's pages (pdfinfo) and where each section starts
// (its numbered contents line, checked against the page's own text with pdftotext), how many
// trials the body's forest plots draw against the appendix's rows, and whether every marked
// number equals `manyfield analyze --json` on the same spec. Files stay in
// test-output/report-large/ to look at. Times are wall clock on a possibly shared machine.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { EXAMPLE_MAPPING, exampleNetworkCsv, exampleSpec } from '../full/exampleNetwork.js';
import { disagreements, markedNumbers } from '../../test/support/reportNumbers.js';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
const args = process.argv.slice(2);
const arg = (name: string): string | undefined => (args.includes(name) ? args[args.indexOf(name) + 1] : undefined);
const trials = Number(arg('--trials') ?? 4000);
const bootstrap = Number(arg('--bootstrap') ?? 200);
const out = join(root, 'test-output', 'report-large');
rmSync(out, { recursive: true, force: true });
mkdirSync(out, { recursive: true });

function timed(what: string, argv: string[]): string {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [join(root, 'bin', 'manyfield.cjs'), ...argv], { encoding: 'utf8', maxBuffer: 1 << 30 });
  const s = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`${what} failed (${r.status}): ${r.stderr}`);
  console.log(`${what}: ${s.toFixed(1)} s`);
  return r.stdout;
}

const csv = join(out, `network-${trials}.csv`);
writeFileSync(csv, exampleNetworkCsv(trials, 17 + trials));
const map = join(out, 'map.json');
writeFileSync(map, JSON.stringify(EXAMPLE_MAPPING));
const spec = join(out, 'spec.json');
writeFileSync(spec, JSON.stringify({ ...exampleSpec({ twoStage: true, oneStage: false, lrt: false, rateBootstrap: bootstrap }), columns: undefined }));
const ws = join(out, `network-${trials}.manyfield`);
const html = join(out, 'report.html');
const pdf = join(out, 'report.pdf');

timed(`import ${trials} trials`, ['import', '--workspace', ws, '--file', csv, '--map', map]);
timed('report --pdf (analysis, HTML, two prints)', ['report', '--workspace', ws, '--spec', spec, '--out', html, '--pdf', pdf]);
const analysis = JSON.parse(timed('analyze --json (for the comparison)', ['analyze', '--workspace', ws, '--spec', spec, '--json', '--no-save'])) as { twoStage: { trials: unknown[] } };

const text = readFileSync(html, 'utf8');
const marked = markedNumbers(text);
const wrong = disagreements(marked, analysis);
console.log(`HTML: ${(statSync(html).size / 1e6).toFixed(2)} MB; ${marked.length} marked numbers, ${wrong.length} differing from analyze --json${wrong.length ? ` (first: ${wrong[0]})` : ''}`);
const forestRows = [...text.matchAll(/data-testid="forest-plot"[\s\S]*?<\/svg>/g)].map((m) => (m[0].match(/data-testid="forest-row"/g) ?? []).length);
const appendixRows = (text.split('id="appendix"')[1]?.match(/<tr>/g) ?? []).length - 1;
console.log(`trials analysed: ${analysis.twoStage.trials.length}; forest plots draw ${forestRows.join(', ')} trial rows; appendix table rows: ${appendixRows}`);

const info = spawnSync('pdfinfo', [pdf], { encoding: 'utf8' }).stdout;
const pages = Number(/Pages:\s+(\d+)/.exec(info)?.[1]);
console.log(`PDF: ${(statSync(pdf).size / 1e6).toFixed(2)} MB, ${pages} pages, ${/Tagged:\s+yes/.test(info) ? 'tagged' : 'untagged'}`);
const page = (n: number) => spawnSync('pdftotext', ['-layout', '-f', String(n), '-l', String(n), pdf, '-'], { encoding: 'utf8' }).stdout;
const squash = (s: string) => s.replace(/\s+/g, ' ').trim();
const contents = [...page(1).matchAll(/^\s*(\d+)\. (.+?)\s+(\d+)\s*$/gm)].map((m) => ({ heading: `${m[1]}. ${m[2].trim()}`, page: Number(m[3]) }));
for (const c of contents) {
  const there = page(c.page).split('\n').map(squash).includes(c.heading);
  console.log(`  ${c.heading.padEnd(40)} page ${String(c.page).padStart(4)} ${there ? 'ok' : 'NOT FOUND ON THAT PAGE'}`);
}
const appendixStart = contents.find((c) => c.heading.includes('Appendix'))?.page ?? pages;
console.log(`body: pages 1-${appendixStart - 1}; appendix: ${pages - appendixStart + 1} pages`);
spawnSync('pdftoppm', ['-r', '50', '-png', '-l', String(Math.min(pages, appendixStart + 1)), pdf, join(out, 'page')]);
console.log(`page images of the body and the appendix's first pages: ${out}`);
