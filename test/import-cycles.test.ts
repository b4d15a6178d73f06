/**
 * No circular imports in app/, worker/ and shared/: the graph of relative imports between our own modules must be
 * acyclic, so each module can be read, tested and replaced after the ones it depends on (the planner split of
 * worker/core/plan/ is the example: every stage imports model.ts and the stages before it, never back).
 *
 * The imports are read with the TypeScript compiler's own parser (`typescript`, already a dev dependency), not a
 * regular expression, so comments, strings and multi-line import lists cannot fool it: `import … from`,
 * `export … from`, `import x = require(…)` and `import(…)` calls. `import type` and `export type` are counted too:
 * they vanish at run time, but the rule is about structure — a type-only circle still ties two modules together
 * so that neither can change or be understood without the other, which is what made plan.ts and plan-lp.ts one
 * module in two files. (A circle only through type imports would not break module initialisation, and the failure
 * message says which edges are type-only, so such a case can be judged on its own.)
 *
 * Cycles are found as strongly connected components (Tarjan, "Depth-first search and linear graph algorithms",
 * SIAM J. Comput. 1(2), 1972 [pub]); a failure names one concrete circle in each component.
 */
import { readdirSync, readFileSync, statSync, existsSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const ROOT = resolve(import.meta.dirname, '..');
const DIRS = ['app', 'worker', 'shared'];
const SOURCE = /\.(ts|mts|mjs|js)$/;

interface Edge {
  to: string;
  typeOnly: boolean;
}

function listSources(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name.startsWith('.')) continue;
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...listSources(p));
    else if (SOURCE.test(name)) out.push(p);
  }
  return out;
}

/** The file a relative specifier names (as written, or with .ts, or a folder's index.ts), or null. */
function resolveSpecifier(from: string, spec: string): string | null {
  const base = resolve(dirname(from), spec);
  for (const p of [base, `${base}.ts`, join(base, 'index.ts')]) {
    if (existsSync(p) && statSync(p).isFile()) return p;
  }
  return null;
}

/** Relative imports of one file: target and whether the import is type-only. */
export function importsOf(file: string, text: string): { spec: string; typeOnly: boolean }[] {
  const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, false);
  const out: { spec: string; typeOnly: boolean }[] = [];
  const add = (node: ts.Expression | undefined, typeOnly: boolean): void => {
    if (node && ts.isStringLiteralLike(node) && node.text.startsWith('.'))
      out.push({ spec: node.text, typeOnly });
  };
  const visit = (node: ts.Node): void => {
    if (ts.isImportDeclaration(node)) {
      const clause = node.importClause;
      const typeOnly =
        !!clause &&
        (clause.isTypeOnly ||
          (!clause.name &&
            !!clause.namedBindings &&
            ts.isNamedImports(clause.namedBindings) &&
            clause.namedBindings.elements.length > 0 &&
            clause.namedBindings.elements.every((e) => e.isTypeOnly)));
      add(node.moduleSpecifier, typeOnly);
    } else if (ts.isExportDeclaration(node)) {
      const typeOnly =
        node.isTypeOnly ||
        (!!node.exportClause &&
          ts.isNamedExports(node.exportClause) &&
          node.exportClause.elements.length > 0 &&
          node.exportClause.elements.every((e) => e.isTypeOnly));
      add(node.moduleSpecifier, typeOnly);
    } else if (ts.isImportEqualsDeclaration(node) && ts.isExternalModuleReference(node.moduleReference)) {
      add(node.moduleReference.expression, node.isTypeOnly);
    } else if (ts.isCallExpression(node) && node.expression.kind === ts.SyntaxKind.ImportKeyword) {
      add(node.arguments[0], false);
    }
    ts.forEachChild(node, visit);
  };
  visit(sf);
  return out;
}

/** The relative-import graph of the given files, keyed by path relative to the repository. */
function importGraph(files: readonly string[]): Map<string, Edge[]> {
  const g = new Map<string, Edge[]>();
  for (const f of files) {
    const edges: Edge[] = [];
    for (const { spec, typeOnly } of importsOf(f, readFileSync(f, 'utf8'))) {
      const target = resolveSpecifier(f, spec);
      if (target) edges.push({ to: relative(ROOT, target), typeOnly });
    }
    g.set(relative(ROOT, f), edges);
  }
  return g;
}

/** Strongly connected components with a circle: more than one module, or a module importing itself. */
export function cyclicComponents(g: ReadonlyMap<string, readonly Edge[]>): string[][] {
  let next = 0;
  const index = new Map<string, number>();
  const low = new Map<string, number>();
  const onStack = new Set<string>();
  const stack: string[] = [];
  const out: string[][] = [];
  const strong = (v: string): void => {
    index.set(v, next);
    low.set(v, next++);
    stack.push(v);
    onStack.add(v);
    for (const { to } of g.get(v) ?? []) {
      if (!index.has(to)) {
        strong(to);
        low.set(v, Math.min(low.get(v)!, low.get(to)!));
      } else if (onStack.has(to)) low.set(v, Math.min(low.get(v)!, index.get(to)!));
    }
    if (low.get(v) === index.get(v)) {
      const comp: string[] = [];
      let w: string;
      do {
        w = stack.pop()!;
        onStack.delete(w);
        comp.push(w);
      } while (w !== v);
      if (comp.length > 1 || (g.get(v) ?? []).some((e) => e.to === v)) out.push(comp.sort());
    }
  };
  for (const v of [...g.keys()].sort()) if (!index.has(v)) strong(v);
  return out.sort((a, b) => a[0].localeCompare(b[0]));
}

/** One concrete circle inside a component, as "a → b ⇢ c → a" (⇢: a type-only import). */
export function describeCycle(g: ReadonlyMap<string, readonly Edge[]>, comp: readonly string[]): string {
  const inComp = new Set(comp);
  const start = comp[0];
  // breadth-first from start back to start, inside the component
  const prev = new Map<string, { from: string; typeOnly: boolean }>();
  const queue = [start];
  for (let i = 0; i < queue.length; i++) {
    const v = queue[i];
    for (const e of g.get(v) ?? []) {
      if (!inComp.has(e.to) || prev.has(e.to)) continue;
      prev.set(e.to, { from: v, typeOnly: e.typeOnly });
      if (e.to === start) break;
      queue.push(e.to);
    }
    if (prev.has(start)) break;
  }
  const path: string[] = [start];
  let v = start;
  do {
    const p = prev.get(v)!;
    path.push(p.typeOnly ? '⇢' : '→', p.from);
    v = p.from;
  } while (v !== start);
  return path.reverse().join(' ');
}

describe('import cycles', () => {
  const files = DIRS.flatMap((d) => listSources(join(ROOT, d)));
  const graph = importGraph(files);

  it('reads the graph: every module of app/, worker/ and shared/, with the planner stages in one direction', () => {
    expect(files.length).toBeGreaterThan(50);
    const to = (f: string) => (graph.get(f) ?? []).map((e) => e.to);
    // a few edges known to exist, so that an empty graph cannot pass
    expect(to('worker/core/plan.ts')).toContain('worker/core/plan/solve.ts');
    expect(to('worker/core/plan/lp-bound.ts')).toEqual([
      'worker/core/clock.ts',
      'worker/core/floor.ts',
      'worker/core/plan/model.ts',
    ]);
    expect(to('worker/core/plan/solve.ts')).toContain('worker/core/plan/lp-bound.ts');
  });

  it('finds a planted circle, and names it', () => {
    const planted = new Map<string, Edge[]>([
      ['a.ts', [{ to: 'b.ts', typeOnly: false }]],
      ['b.ts', [{ to: 'c.ts', typeOnly: true }]],
      [
        'c.ts',
        [
          { to: 'a.ts', typeOnly: false },
          { to: 'd.ts', typeOnly: false },
        ],
      ],
      ['d.ts', []],
      ['e.ts', [{ to: 'e.ts', typeOnly: false }]],
    ]);
    const comps = cyclicComponents(planted);
    expect(comps).toEqual([['a.ts', 'b.ts', 'c.ts'], ['e.ts']]);
    expect(describeCycle(planted, comps[0])).toBe('a.ts → b.ts ⇢ c.ts → a.ts');
    expect(describeCycle(planted, comps[1])).toBe('e.ts → e.ts');
    // comments, strings and multi-line lists do not fool the parser; type-only imports are marked
    const text = [
      "// import { x } from './not-this.ts';",
      'const s = "import y from \'./nor-this.ts\'";',
      "import {\n  a,\n  b,\n} from './real.ts';",
      "import type { T } from './types.ts';",
      "import { type U } from './types2.ts';",
      "export { z } from './again.ts';",
      "export type { V } from './types3.ts';",
      "const lazy = () => import('./later.ts');",
      "import 'node:fs';",
    ].join('\n');
    expect(importsOf('x.ts', text)).toEqual([
      { spec: './real.ts', typeOnly: false },
      { spec: './types.ts', typeOnly: true },
      { spec: './types2.ts', typeOnly: true },
      { spec: './again.ts', typeOnly: false },
      { spec: './types3.ts', typeOnly: true },
      { spec: './later.ts', typeOnly: false },
    ]);
  });

  it('no circular imports in app/, worker/ and shared/', () => {
    const circles = cyclicComponents(graph).map((c) => describeCycle(graph, c));
    expect(circles, `circular imports:\n${circles.join('\n')}`).toEqual([]);
  });

  it('the panels reach the app only through its host interface (app/panel-host.ts), never app/app.ts', () => {
    const panels = [...graph.keys()].filter((f) => f.startsWith('app/panels/'));
    expect(panels).toContain('app/panels/kit.ts');
    expect(panels.length).toBeGreaterThanOrEqual(10);
    for (const f of panels) expect(graph.get(f)!.map((e) => e.to)).not.toContain('app/app.ts');
    expect(graph.get('app/app.ts')!.map((e) => e.to)).toContain('app/panels/index.ts');
    expect(graph.get('app/panels/index.ts')!.map((e) => e.to)).toContain('app/panel-host.ts');
  });
});
