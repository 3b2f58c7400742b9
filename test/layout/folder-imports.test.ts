/**
 * The folders under src/ form a layered whole: commands on top, shared utilities at the
 * bottom, and no folder reaches back up into one that imports it (DESIGN.md, "Layout").
 * This reads every import statement under src/ (type-only imports too: a type cycle is still
 * a tangle for a reader) and fails on any cycle between folders, naming one import per step.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve, sep } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const SRC = fileURLToPath(new URL('../../src/', import.meta.url));

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) return sourceFiles(p);
    return p.endsWith('.ts') ? [p] : [];
  });
}

/** The folder under src/ that holds a file ('' for a file directly in src/). */
function folderOf(file: string): string {
  const rel = relative(SRC, file);
  return rel.includes(sep) ? rel.split(sep)[0]! : '';
}

/** Every relative module specifier of a file's import and export statements. */
export function importSpecifiers(text: string): string[] {
  const out: string[] = [];
  const re = /(?:^|\n)\s*(?:import|export)\s[^;]*?from\s*['"](\.{1,2}\/[^'"]+)['"]|(?:^|\n)\s*import\s*['"](\.{1,2}\/[^'"]+)['"]|import\(\s*['"](\.{1,2}\/[^'"]+)['"]\s*\)/g;
  for (const m of text.matchAll(re)) out.push((m[1] ?? m[2] ?? m[3])!);
  return out;
}

interface Edge {
  from: string;
  to: string;
  /** One import that makes the edge, for the message. */
  example: string;
}

function folderEdges(): Map<string, Map<string, Edge>> {
  const edges = new Map<string, Map<string, Edge>>();
  for (const file of sourceFiles(SRC)) {
    const from = folderOf(file);
    for (const spec of importSpecifiers(readFileSync(file, 'utf8'))) {
      const target = resolve(dirname(file), spec);
      const to = folderOf(target);
      if (to === from) continue;
      if (!edges.has(from)) edges.set(from, new Map());
      const out = edges.get(from)!;
      if (!out.has(to)) out.set(to, { from, to, example: `${relative(SRC, file)} imports ${spec}` });
    }
  }
  return edges;
}

/** A cycle of folders (as edges), or null when the graph has none (depth-first search). */
export function findCycle(edges: Map<string, Map<string, Edge>>): Edge[] | null {
  const state = new Map<string, 'open' | 'done'>();
  const path: Edge[] = [];
  const visit = (node: string): Edge[] | null => {
    state.set(node, 'open');
    for (const e of edges.get(node)?.values() ?? []) {
      const s = state.get(e.to);
      if (s === 'open') {
        const start = path.findIndex((p) => p.from === e.to);
        return [...path.slice(start < 0 ? path.length : start), e];
      }
      if (s === 'done') continue;
      path.push(e);
      const found = visit(e.to);
      if (found) return found;
      path.pop();
    }
    state.set(node, 'done');
    return null;
  };
  for (const node of [...edges.keys()].sort()) {
    if (state.has(node)) continue;
    const found = visit(node);
    if (found) return found;
  }
  return null;
}

describe('the import graph between folders of src/ (DESIGN.md: no cycle between folders)', () => {
  it('reads import statements of every kind, and finds a planted cycle (the check can fail)', () => {
    const text = "import { a } from '../x/a.js';\nimport type { B } from './b.js';\nexport { c } from '../y/c.js';\nimport '../z/side.js';\nconst m = await import('../w/m.js');\nimport { readFileSync } from 'node:fs';\n";
    expect(importSpecifiers(text)).toEqual(['../x/a.js', './b.js', '../y/c.js', '../z/side.js', '../w/m.js']);
    const edge = (from: string, to: string): [string, Edge] => [to, { from, to, example: `${from} -> ${to}` }];
    const planted = new Map([
      ['cli', new Map([edge('cli', 'sinks')])],
      ['sinks', new Map([edge('sinks', 'records')])],
      ['records', new Map([edge('records', 'sinks'), edge('records', 'util')])],
    ]);
    expect(findCycle(planted)?.map((e) => e.from)).toEqual(['sinks', 'records']);
    planted.get('records')!.delete('sinks');
    expect(findCycle(planted)).toBeNull();
  });

  it('has no cycle', () => {
    const edges = folderEdges();
    expect(edges.size).toBeGreaterThan(10);
    const cycle = findCycle(edges);
    expect(cycle?.map((e) => e.example) ?? []).toEqual([]);
  });

  it('follows the layout of DEVELOPERS.md: every folder listed once, and each imports only folders listed below it', () => {
    const text = readFileSync(new URL('../../DEVELOPERS.md', import.meta.url), 'utf8');
    const block = text.slice(text.indexOf('\nsrc/\n'), text.indexOf('\nweb-viewer/'));
    const listed = [...block.matchAll(/^ {2}([a-z-]+)\/ /gm)].map((m) => m[1]!);
    const folders = readdirSync(SRC).filter((n) => statSync(join(SRC, n)).isDirectory());
    expect([...listed].sort()).toEqual([...folders].sort());
    const upward: string[] = [];
    for (const [from, out] of folderEdges()) {
      for (const e of out.values()) if (listed.indexOf(e.to) < listed.indexOf(from)) upward.push(`${e.from} -> ${e.to} (${e.example}): ${e.to} is listed above ${e.from}`);
    }
    expect(upward).toEqual([]);
  });

  it('keeps every source file in a folder (src/ holds folders only)', () => {
    const loose = sourceFiles(SRC).filter((f) => folderOf(f) === '').map((f) => relative(SRC, f));
    expect(loose).toEqual([]);
  });
});
