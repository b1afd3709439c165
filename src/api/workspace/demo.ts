// Builds the invented demo network into a workspace. The file is built beside the target and
// moved into place only when complete, so a failure or cancellation leaves nothing behind.
import { existsSync, renameSync, rmSync } from 'node:fs';
import { generateDemoNetwork, type DemoTruth } from '../../demo/generate.js';
import { DEMO_NETWORK_NAME, DEMO_SITES } from '../../demo/scenario.js';
import { openWorkspace, importParsedTable, setMeta, setSiteDetails } from '../../store/index.js';
import { throwIfCancelled, type CallContext } from '../context.js';
import { ManyfieldError } from '../result.js';

export interface DemoSummary {
  readonly workspace: string;
  readonly network: string;
  readonly trials: number;
  readonly plots: number;
  readonly sites: number;
  readonly years: number[];
}

export const DEMO_TRUTH_KEY = 'demo.truth';

export function buildDemo(path: string, replace: boolean, ctx?: CallContext): DemoSummary {
  if (existsSync(path) && !replace)
    throw new ManyfieldError('conflict', `"${path}" already exists; choose another file, or give --replace to rebuild the demo there (its current content is then replaced)`);
  const { table, truth } = generateDemoNetwork();
  const building = `${path}.building-${process.pid}`;
  removeDatabaseFiles(building);
  try {
    const ws = openWorkspace(building, { create: true });
    try {
      throwIfCancelled(ctx);
      importParsedTable(ws, table, {
        onProgress: (done, total) => {
          ctx?.onProgress?.({ stage: 'store', fraction: total > 0 ? done / total : null });
          throwIfCancelled(ctx);
        },
      });
      for (const site of DEMO_SITES)
        setSiteDetails(ws, site.code, {
          name: site.name,
          region: site.region,
          lat: site.lat,
          lon: site.lon,
          covariates: { soil_ph: site.soilPh, organic_matter: site.organicMatter, rainfall_normal: site.rainfallNormal },
          units: { soil_ph: 'pH', organic_matter: '%', rainfall_normal: 'mm' },
        });
      setMeta(ws, DEMO_TRUTH_KEY, truth satisfies DemoTruth);
      setMeta(ws, 'network.name', DEMO_NETWORK_NAME);
    } finally {
      ws.close();
    }
    removeDatabaseFiles(path);
    renameSync(building, path);
  } catch (e) {
    removeDatabaseFiles(building);
    throw e;
  }
  return {
    workspace: path,
    network: DEMO_NETWORK_NAME,
    trials: table.trials.length,
    plots: table.plots.length,
    sites: new Set(table.trials.map((t) => t.site)).size,
    years: [...new Set(table.trials.map((t) => t.year))].sort(),
  };
}

function removeDatabaseFiles(path: string): void {
  for (const suffix of ['', '-wal', '-shm', '-journal']) rmSync(`${path}${suffix}`, { force: true });
}
