/**
 * The project's import graph, read from the sources' import and export
 * statements (static and `import('…')` with a literal path): file → files it
 * imports, and the same folded onto folders. Used by the architecture tests.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';

/** Files under the given top-level folders, and their imports (paths relative to root, `.ts`). */
export function importGraph(root: string, tops: readonly string[]): Map<string, Set<string>> {
  const files: string[] = [];
  const walk = (d: string): void => {
    for (const name of readdirSync(d)) {
      const p = join(d, name);
      if (statSync(p).isDirectory()) walk(p);
      else if (p.endsWith('.ts') && !p.endsWith('.d.ts')) files.push(p);
    }
  };
  for (const t of tops) walk(join(root, t));
  const graph = new Map<string, Set<string>>();
  const spec = /(?:^|[^.\w])(?:import|export)\s[^'";]*?from\s*['"](\.{1,2}\/[^'"]+)['"]|import\(\s*['"](\.{1,2}\/[^'"]+)['"]\s*\)|^\s*import\s*['"](\.{1,2}\/[^'"]+)['"]/gm;
  for (const f of files) {
    const text = readFileSync(f, 'utf8').replace(/\/\*[\s\S]*?\*\//g, '').replace(/^\s*\/\/.*$/gm, '');
    const deps = new Set<string>();
    for (const m of text.matchAll(spec)) {
      const s = m[1] ?? m[2] ?? m[3];
      deps.add(relative(root, resolve(dirname(f), s.replace(/\.js$/, '.ts'))));
    }
    graph.set(relative(root, f), deps);
  }
  return graph;
}

/** The graph folded onto folders (a file's folder is its directory); self-edges dropped. */
export function folderGraph(g: Map<string, Set<string>>): Map<string, Set<string>> {
  const out = new Map<string, Set<string>>();
  for (const [f, deps] of g) {
    const a = dirname(f);
    const set = out.get(a) ?? new Set<string>();
    for (const d of deps) if (dirname(d) !== a) set.add(dirname(d));
    out.set(a, set);
  }
  return out;
}

/** Every elementary cycle's first witness found by depth-first search, as a path a → … → a. */
export function findCycles(g: Map<string, Set<string>>): string[][] {
  const state = new Map<string, 0 | 1 | 2>();
  const stack: string[] = [];
  const cycles: string[][] = [];
  const visit = (n: string): void => {
    state.set(n, 1);
    stack.push(n);
    for (const d of g.get(n) ?? []) {
      if (!g.has(d)) continue;
      const s = state.get(d) ?? 0;
      if (s === 1) cycles.push([...stack.slice(stack.indexOf(d)), d]);
      else if (s === 0) visit(d);
    }
    stack.pop();
    state.set(n, 2);
  };
  for (const n of [...g.keys()].sort()) if (!state.get(n)) visit(n);
  return cycles;
}
