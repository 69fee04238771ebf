/**
 * No spread of arrays in the project's sources: `f(...xs)` passes every element as an argument and
 * `[...xs]` copies element by element through the iterator; with a field of ~10⁵ values or more the
 * first throws "Maximum call stack size exceeded" (measured: `Math.max(...array)` of a 290k-vector
 * field). The sources are parsed with the TypeScript compiler and every spread element (in a call's
 * arguments, a `new` expression or an array literal) is reported; object spread `{ ...o }`, rest
 * parameters and rest destructuring are different constructs and allowed. Use a loop, `Array.from`,
 * `concat` or `subarray` instead.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));

function sources(dir: string, out: string[] = []): string[] {
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    if (e.name === 'node_modules' || e.name === 'dist' || e.name.startsWith('.')) continue;
    const p = path.join(dir, e.name);
    if (e.isDirectory()) sources(p, out);
    else if (/\.(ts|mts|cts|mjs|cjs|js)$/.test(e.name) && !e.name.endsWith('.d.ts')) out.push(p);
  }
  return out;
}

/** `file:line: text` of every spread element in a source text. */
export function spreadElements(file: string, text: string): string[] {
  const sf = ts.createSourceFile(file, text, ts.ScriptTarget.Latest, true, file.endsWith('ts') ? ts.ScriptKind.TS : ts.ScriptKind.JS);
  const found: string[] = [];
  const visit = (n: ts.Node): void => {
    if (ts.isSpreadElement(n)) {
      const { line } = sf.getLineAndCharacterOfPosition(n.getStart(sf));
      found.push(`${path.relative(ROOT, file)}:${line + 1}: ${n.parent.getText(sf).split('\n')[0]!.trim().slice(0, 100)}`);
    }
    ts.forEachChild(n, visit);
  };
  visit(sf);
  return found;
}

describe('no spread of arrays (packages/)', () => {
  it('the check finds the spreads it is meant to find, and only those', () => {
    const bad = 'const a = Math.max(...xs);\nys.push(...xs);\nconst b = [...xs];\nconst c = [1,\n  ...xs];\nnew Set(...q);';
    expect(spreadElements(path.join(ROOT, 'x.ts'), bad).map((s) => s.split(':')[1])).toEqual(['1', '2', '3', '5', '6']);
    const fine = 'const o = { ...p };\nfunction f(...args: number[]) { const [h, ...t] = args; const { a, ...r } = o; return t; }';
    expect(spreadElements(path.join(ROOT, 'y.ts'), fine)).toEqual([]);
  });

  it('no source file under packages/ spreads an array into a call or an array literal', () => {
    const files = sources(path.join(ROOT, 'packages'));
    expect(files.length).toBeGreaterThan(50);
    const found = files.flatMap((f) => spreadElements(f, readFileSync(f, 'utf8')));
    expect(found).toEqual([]);
  });
});
