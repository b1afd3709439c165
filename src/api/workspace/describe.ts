// What the start and network screens show about a workspace: its name, row counts, traits,
// years and protocols (factors with units, treatments with their levels).
import { existsSync } from 'node:fs';
import { basename, extname } from 'node:path';
import type { LevelValue } from '../../engine/types.js';
import { counts, getMeta, openWorkspace, type Workspace, type WorkspaceCounts } from '../../store/index.js';
import { loadProtocol } from '../../store/network.js';
import { ManyfieldError } from '../result.js';

export interface TraitDescription {
  readonly name: string;
  readonly unit: string;
  readonly kind: 'continuous' | 'percent' | 'count';
  readonly lower: number | null;
  readonly upper: number | null;
}

export interface ProtocolDescription {
  readonly name: string;
  readonly control: string | null;
  readonly factors: { readonly name: string; readonly kind: 'numeric' | 'categorical'; readonly unit: string | null }[];
  readonly treatments: { readonly code: string; readonly label: string; readonly levels: Readonly<Record<string, LevelValue>> }[];
}

export interface WorkspaceDescription {
  readonly path: string;
  /** The network name stored in the workspace, else the file name without its extension. */
  readonly name: string;
  readonly counts: WorkspaceCounts;
  readonly traits: TraitDescription[];
  readonly years: number[];
  readonly protocols: ProtocolDescription[];
  /** Plots currently excluded (each with its reason). */
  readonly exclusions: number;
}

export function describeWorkspace(path: string): WorkspaceDescription {
  const ws = openWorkspace(path);
  try {
    return describeOpen(ws);
  } finally {
    ws.close();
  }
}

/** A new, empty workspace (migrated to the current schema); an existing file is never touched. */
export function createWorkspace(path: string): WorkspaceDescription {
  if (existsSync(path)) throw new ManyfieldError('conflict', `"${path}" already exists; open it instead, or choose another name`, { path });
  const ws = openWorkspace(path, { create: true });
  try {
    return describeOpen(ws);
  } finally {
    ws.close();
  }
}

export function workspaceName(ws: Workspace): string {
  const stored = getMeta<unknown>(ws, 'network.name');
  if (typeof stored === 'string' && stored.length > 0) return stored;
  return basename(ws.path, extname(ws.path));
}

function describeOpen(ws: Workspace): WorkspaceDescription {
  const db = ws.db;
  const traits = db.prepare('SELECT name, unit, kind, lower, upper FROM trait ORDER BY name').all() as TraitDescription[];
  const years = (db.prepare('SELECT DISTINCT year FROM trial ORDER BY year').all() as { year: number }[]).map((r) => r.year);
  const protocolRows = db.prepare('SELECT id, name FROM protocol ORDER BY name').all() as { id: number; name: string }[];
  const protocols = protocolRows.map((p): ProtocolDescription => {
    const loaded = loadProtocol(ws, p.id);
    return {
      name: p.name,
      control: loaded.control,
      factors: loaded.factors.map((f) => ({ name: f.name, kind: f.kind, unit: f.unit ?? null })),
      treatments: loaded.treatments.map((t) => ({ code: t.code, label: t.label ?? t.code, levels: t.levels })),
    };
  });
  const exclusions = (db.prepare('SELECT COUNT(*) AS n FROM plot WHERE excluded = 1').get() as { n: number }).n;
  return { path: ws.path, name: workspaceName(ws), counts: counts(ws), traits, years, protocols, exclusions };
}
