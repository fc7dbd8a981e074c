/**
 * Architecture rules of house-style.md, checked on the real import graph:
 *  - physics/ imports no I/O: no Node built-ins, no database, queue, CLI or plotting packages,
 *    nothing from scheduler/ or workers/; the only packages allowed are pure-math ones (PURE_PACKAGES);
 *  - there are no import cycles anywhere.
 * Imports are read with the TypeScript compiler's own pre-processor (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import ts from 'typescript';
import fs from 'node:fs';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '..');
const DIRS = ['physics', 'scheduler', 'workers'];

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...sourceFiles(p));
    else if (/\.(ts|mts)$/.test(entry.name) && !entry.name.endsWith('.d.ts')) out.push(p);
  }
  return out;
}

function importsOf(file: string): string[] {
  const info = ts.preProcessFile(fs.readFileSync(file, 'utf8'), true, true);
  return info.importedFiles.map((f) => f.fileName);
}

function resolveLocal(from: string, spec: string): string | null {
  if (!spec.startsWith('.')) return null;
  const base = path.resolve(path.dirname(from), spec);
  for (const cand of [base.replace(/\.js$/, '.ts'), base.replace(/\.mjs$/, '.mts'), base, `${base}.ts`, path.join(base, 'index.ts')]) {
    if (fs.existsSync(cand) && fs.statSync(cand).isFile()) return cand;
  }
  return null;
}

/** Packages physics/ may use: pure functions, no I/O (stdlib's erf). */
const PURE_PACKAGES = ['@stdlib/math-base-special-erf'];

const files = DIRS.flatMap((d) => (fs.existsSync(path.join(root, d)) ? sourceFiles(path.join(root, d)) : []));

describe('import graph', () => {
  it('physics/ imports no I/O, no Node APIs and nothing outside physics/', () => {
    const banned: string[] = [];
    for (const file of files.filter((f) => f.startsWith(path.join(root, 'physics') + path.sep))) {
      for (const spec of importsOf(file)) {
        const rel = path.relative(root, file);
        if (spec.startsWith('node:') || ['fs', 'path', 'os', 'child_process', 'worker_threads', 'http', 'net'].includes(spec)) {
          banned.push(`${rel} -> ${spec}`);
        } else if (spec.startsWith('.')) {
          const target = resolveLocal(file, spec);
          if (target && !target.startsWith(path.join(root, 'physics') + path.sep)) banned.push(`${rel} -> ${spec}`);
        } else if (!PURE_PACKAGES.includes(spec)) {
          banned.push(`${rel} -> ${spec} (physics/ uses only ${PURE_PACKAGES.join(', ')})`);
        }
      }
    }
    expect(banned, banned.join('\n')).toEqual([]);
  });

  it('has no import cycles', () => {
    const graph = new Map<string, string[]>();
    for (const f of files) {
      graph.set(f, importsOf(f).map((s) => resolveLocal(f, s)).filter((x): x is string => x !== null));
    }
    const state = new Map<string, 'open' | 'done'>();
    const cycles: string[] = [];
    const visit = (node: string, stack: string[]): void => {
      const s = state.get(node);
      if (s === 'done') return;
      if (s === 'open') {
        cycles.push([...stack.slice(stack.indexOf(node)), node].map((p) => path.relative(root, p)).join(' -> '));
        return;
      }
      state.set(node, 'open');
      for (const next of graph.get(node) ?? []) visit(next, [...stack, node]);
      state.set(node, 'done');
    };
    for (const f of files) visit(f, []);
    expect(cycles, cycles.join('\n')).toEqual([]);
  });
});
