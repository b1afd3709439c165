// Runs R (Debian's r-base-core) for live cross-checks. Tests never skip when R is missing:
// they fail with a message saying what to install, as the checks are required.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export function requireR(): void {
  try {
    execFileSync('Rscript', ['--version'], { stdio: 'pipe' });
  } catch {
    throw new Error('Rscript not found: install r-base-core r-cran-nlme r-cran-lme4 r-cran-lmertest r-cran-pbkrtest r-cran-glmmtmb (see .ci/run)');
  }
}

export interface RRun {
  /** Named numeric outputs printed by the script with emit(name, value). */
  readonly values: Record<string, number>;
  readonly stdout: string;
}

/**
 * Run an R script. `files` are written into a fresh temp dir (R's working directory).
 * Inside the script, `emit(name, x)` prints one value per element of x as
 * name[i]=<17 significant digits>, so full double precision crosses the boundary.
 */
export function runR(script: string, files: Record<string, string> = {}, timeoutMs = 600_000): RRun {
  requireR();
  const dir = mkdtempSync(join(tmpdir(), 'manyfield-r-'));
  try {
    for (const [name, content] of Object.entries(files)) writeFileSync(join(dir, name), content);
    const prelude = `emit <- function(name, x) { x <- as.numeric(x); if (length(x) == 1) cat(sprintf("%s=%.17g\\n", name, x)) else for (i in seq_along(x)) cat(sprintf("%s[%d]=%.17g\\n", name, i, x[i])) }\n`;
    writeFileSync(join(dir, 'script.R'), prelude + script);
    const stdout = execFileSync('Rscript', ['--vanilla', 'script.R'], { cwd: dir, encoding: 'utf8', timeout: timeoutMs, stdio: ['ignore', 'pipe', 'pipe'], maxBuffer: 256 * 1024 * 1024 });
    const values: Record<string, number> = {};
    for (const line of stdout.split('\n')) {
      const m = /^([A-Za-z0-9_.:\[\]-]+)=(.*)$/.exec(line.trim());
      if (m) values[m[1]] = m[2] === 'NA' || m[2] === 'NaN' ? NaN : Number(m[2]);
    }
    return { values, stdout };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Indexed values name[1..n] as an array. */
export function rVector(run: RRun, name: string): number[] {
  if (name in run.values) return [run.values[name]];
  const out: number[] = [];
  for (let i = 1; `${name}[${i}]` in run.values; i++) out.push(run.values[`${name}[${i}]`]);
  if (out.length === 0) throw new Error(`R output has no value named ${name}:\n${run.stdout.slice(0, 2000)}`);
  return out;
}

/** Relative difference with an absolute floor, for tolerance checks. */
export function relDiff(a: number, b: number, floor = 1e-300): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), floor);
}
