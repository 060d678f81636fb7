/**
 * The folders read as layers (docs/architecture.md): domain types and pure
 * numerics at the bottom, drivers / pipelines / db in the middle, app, cli,
 * report and web on top; no file and no folder imports back up.
 */
import { describe, expect, it } from 'vitest';
import { fileURLToPath } from 'node:url';
import { dirname } from 'node:path';
import { findCycles, folderGraph, importGraph } from '../helpers/import-graph.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const graph = importGraph(root, ['src', 'drivers', 'pipelines', 'db']);
const folders = folderGraph(graph);

/** What each folder may import (besides itself and npm packages). */
const ALLOWED: Record<string, string[]> = {
  'src/domain': [],
  'src/physics': ['src/domain'],
  'src/analysis': ['src/domain', 'src/physics'],
  'src/config': ['src/domain', 'src/physics', 'src/analysis'],
  'src/display': ['src/domain'],
  drivers: ['src/domain', 'src/config', 'src/physics', 'src/analysis'],
  'drivers/simulator': ['drivers', 'src/domain', 'src/config', 'src/physics', 'src/analysis'],
  pipelines: ['src/domain', 'src/config', 'src/physics', 'src/analysis'],
  'pipelines/watch': ['pipelines', 'src/domain', 'src/config', 'src/physics', 'src/analysis'],
  db: ['src/domain'],
  'db/pg': ['db', 'src/domain'],
  'src/alerts': ['src/domain', 'src/config'],
  'src/summaries': ['db', 'src/domain', 'src/config', 'src/physics', 'src/analysis', 'src/display'],
  'src/report': ['src/summaries', 'db', 'src/domain', 'src/config', 'src/physics', 'src/analysis', 'src/display'],
  'src/server': ['src/report', 'src/summaries', 'db', 'src/domain', 'src/config', 'src/physics', 'src/analysis', 'src/display'],
};
const TOP = ['src/app', 'src/cli', 'src/cli/commands', 'src/web'];

describe('import graph', () => {
  it('has no file-level cycle', () => {
    expect(findCycles(graph).map((c) => c.join(' → '))).toEqual([]);
  });

  it('has no folder-level cycle', () => {
    expect(findCycles(folders).map((c) => c.join(' → '))).toEqual([]);
  });

  it('every folder imports only the layers below it', () => {
    const bad: string[] = [];
    for (const [folder, deps] of folders) {
      const allowed = ALLOWED[folder];
      if (allowed === undefined) {
        if (!TOP.includes(folder)) bad.push(`${folder}: not placed in a layer`);
        continue;
      }
      for (const d of deps) if (!allowed.includes(d)) bad.push(`${folder} imports ${d}`);
    }
    expect(bad).toEqual([]);
  });

  it('the top layers are ordered: app below cli, nothing below imports them', () => {
    const bad: string[] = [];
    for (const [f, deps] of graph) {
      const from = dirname(f);
      for (const d of deps) {
        const to = dirname(d);
        if (to.startsWith('src/cli') && !from.startsWith('src/cli')) bad.push(`${f} imports ${d}`);
        if (to === 'src/app' && !TOP.includes(from)) bad.push(`${f} imports ${d}`);
      }
    }
    expect(bad).toEqual([]);
  });

  it('reads every source file (the parser sees the imports)', () => {
    expect(graph.size).toBeGreaterThan(80);
    expect([...graph.values()].reduce((n, s) => n + s.size, 0)).toBeGreaterThan(200);
  });
});
