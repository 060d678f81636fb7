/**
 * The repository explains itself: every document that code, tests and docs
 * point at is in the repository, and nothing points outside it.
 */
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { join } from 'node:path';

const root = fileURLToPath(new URL('../../', import.meta.url));
const files = execFileSync('git', ['ls-files', '--cached', '--others', '--exclude-standard'], { cwd: root, encoding: 'utf8' })
  .split('\n').filter((f) => /\.(ts|mjs|js|md|json)$/.test(f) && !f.startsWith('node_modules/') && f !== 'package-lock.json' && existsSync(join(root, f)));

describe('documents named in the repository', () => {
  it('every docs/*.md and top-level *.md it names exists', () => {
    const missing = new Set<string>();
    for (const f of files) {
      const text = readFileSync(join(root, f), 'utf8');
      for (const m of text.matchAll(/(?<![\w./-])((?:[\w.-]+\/)*[A-Za-z][\w-]*\.md)\b/g)) {
        const name = m[1];
        // a path (root- or file-relative), or a bare upper-case name such as README.md; a `quoted` path may be another repository's
        if (!name.includes('/') && !/^[A-Z]+\.md$/.test(name)) continue;
        if (text[m.index! - 1] === '`') continue;
        const here = join(root, f, '..');
        if (!existsSync(join(root, name)) && !existsSync(join(here, name))) missing.add(`${f}: ${name}`);
      }
    }
    expect([...missing]).toEqual([]);
  });

  it('nothing points outside the repository', () => {
    const bad = files.filter((f) => !f.startsWith('.ci/') && /\.\.\/shared|\/work\/shared|shared\/design|shared\/reference/.test(readFileSync(join(root, f), 'utf8')));
    expect(bad).toEqual([]);
  });

  it('reads the tree', () => {
    expect(files.length).toBeGreaterThan(150);
  });
});
