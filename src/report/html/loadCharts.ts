// Loads the shared chart components (renderer/charts/shared, React) built for Node by
// scripts/bundle.js into dist/cli/reportCharts.cjs. The source tree compiles without JSX, so
// the charts come in as a built file, found beside the command's bundle, from the job worker's bundle (dist/main) or from dist/report/html.
// In a desktop package the file is unpacked from app.asar (asarUnpack in electron-builder.yml).
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { ReportCharts } from './reportInput.js';

export function loadReportCharts(): ReportCharts {
  const here = dirname(fileURLToPath(import.meta.url)).replace(/app\.asar(?=[\\/]|$)/, 'app.asar.unpacked');
  const candidates = [join(here, 'reportCharts.cjs'), join(here, '..', 'cli', 'reportCharts.cjs'), join(here, '..', '..', 'cli', 'reportCharts.cjs'), join(here, '..', '..', '..', 'dist', 'cli', 'reportCharts.cjs')];
  const found = candidates.find((c) => existsSync(c));
  if (!found) throw new Error(`the report's charts are not built (looked for ${candidates.join(', ')}); run "npm run build"`);
  const mod = createRequire(import.meta.url)(found) as ReportCharts;
  return { forest: mod.forest, rate: mod.rate };
}
