/**
 * Ctrl-C and SIGTERM during a real `rhofield density` run of a 2048 × 2048 pair (spawned processes):
 * at every moment nothing is left anywhere (no staging folder inside or beside --out, no temporary or
 * partial file), the user's file in --out is byte-identical, and the exit code is 130 (SIGINT) or
 * 143 (SIGTERM). The moments are keyed to the stage messages of --verbose (plus a delay), so they do not
 * depend on the machine's speed.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { saveImage16, synthPair } from '@rhofield/core';
import { LEFTOVER, ROOT, rhofield, rhofieldAsync, sha256, tree } from './helpers.js';

const tmp = mkdtempSync(path.join(os.tmpdir(), 'rhofield-signals-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));
const ref = path.join(tmp, 'ref.png');
const meas = path.join(tmp, 'meas.png');
const setup = path.join(ROOT, 'fixtures/demo/setup.json');

beforeAll(async () => {
  const p = synthPair({ width: 2048, height: 2048, diameterPx: 2.8, dotsPerWindow: 10, seed: 3, bitDepth: 16, peak: 40000, displacement: { kind: 'uniform', dx: 0.8, dy: -0.4 } });
  await saveImage16(p.ref, ref);
  await saveImage16(p.meas, meas);
}, 120_000);

interface Outcome {
  code: number | null;
  signal: string | null;
  stderr: string;
  sentAfter: string;
}

/** Run density, send `sig` `delayMs` after the stderr line "stage: <stage>" appears. */
function interruptAt(out: string, stage: string, delayMs: number, sig: NodeJS.Signals): Promise<Outcome> {
  const child = rhofieldAsync(['density', ref, meas, '--setup', setup, '--out', out, '--step', '8', '--verbose']);
  let stderr = '';
  let sent = false;
  let sentAfter = '';
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      reject(new Error(`no "stage: ${stage}" within 100 s; stderr: ${stderr}`));
    }, 100_000);
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (s: string) => {
      stderr += s;
      if (!sent && stderr.includes(`stage: ${stage}`)) {
        sent = true;
        setTimeout(() => {
          sentAfter = (stderr.match(/stage: [^\n]+/g) ?? []).at(-1) ?? '';
          child.kill(sig);
        }, delayMs);
      }
    });
    child.on('exit', (code, signal) => {
      clearTimeout(timer);
      resolve({ code, signal, stderr, sentAfter });
    });
  });
}

/** After the run: --out holds the user's file and, only if the signal came during the final renames, one complete set. */
function expectNothingLeft(caseDir: string, out: string, notesHash: string): void {
  expect(readdirSync(caseDir)).toEqual(['out']); // nothing beside --out
  expect(tree(caseDir).filter((n) => LEFTOVER.test(n))).toEqual([]);
  expect(sha256(path.join(out, 'notes.txt'))).toBe(notesHash);
  const names = readdirSync(out);
  if (names.length > 1) {
    // interrupted while the finished files were being moved in: the commit completes, the set is whole
    const m = JSON.parse(readFileSync(path.join(out, '.rhofield-manifest.json'), 'utf8')) as { state: string; files: Array<{ name: string; sha256: string }> };
    expect(m.state).toBe('complete');
    expect(names.sort()).toEqual(['.rhofield-manifest.json', 'notes.txt', ...m.files.map((f) => f.name)].sort());
  }
}

const moments: Array<[string, number]> = [
  ['loading images', 0],
  ['measuring displacement', 300],
  ['writing displacement files', 100],
  ['reconstructing density', 0],
  ['writing density files', 100],
];

describe('interrupting rhofield density on a 2048² pair', () => {
  let k = 0;
  for (const [stage, delay] of moments) {
    it(`SIGINT ${delay} ms after "${stage}": exit 130, nothing left`, async () => {
      const caseDir = path.join(tmp, `case-${k++}`);
      const out = path.join(caseDir, 'out');
      mkdirSync(out, { recursive: true });
      writeFileSync(path.join(out, 'notes.txt'), 'keep me\n');
      const notes = sha256(path.join(out, 'notes.txt'));
      const r = await interruptAt(out, stage, delay, 'SIGINT');
      expect(r.code, r.stderr).toBe(130);
      expect(r.stderr).toMatch(/interrupted \(SIGINT\)/);
      expect(r.stderr).not.toMatch(/\n\s+at /);
      expectNothingLeft(caseDir, out, notes);
      expect(readdirSync(out)).toEqual(['notes.txt']);
    }, 120_000);
  }

  it('SIGTERM while measuring: exit 143, nothing left; the next run on that --out needs no --force', async () => {
    const caseDir = path.join(tmp, 'term');
    const out = path.join(caseDir, 'out');
    mkdirSync(out, { recursive: true });
    writeFileSync(path.join(out, 'notes.txt'), 'keep me too\n');
    const notes = sha256(path.join(out, 'notes.txt'));
    const r = await interruptAt(out, 'measuring displacement', 200, 'SIGTERM');
    expect(r.code, r.stderr).toBe(143);
    expect(r.stderr).toMatch(/interrupted \(SIGTERM\)/);
    expectNothingLeft(caseDir, out, notes);
    expect(readdirSync(out)).toEqual(['notes.txt']);
    const again = rhofield(['density', ref, meas, '--setup', setup, '--out', out, '--quiet']);
    expect(again.code, again.stderr).toBe(0);
    expect(sha256(path.join(out, 'notes.txt'))).toBe(notes);
    expect(tree(caseDir).filter((n) => LEFTOVER.test(n))).toEqual([]);
  }, 120_000);

  it('a new --out that the interrupted run created is removed again', async () => {
    const caseDir = path.join(tmp, 'fresh');
    mkdirSync(caseDir);
    const out = path.join(caseDir, 'out');
    const r = await interruptAt(out, 'writing displacement files', 50, 'SIGINT');
    expect(r.code, r.stderr).toBe(130);
    expect(readdirSync(caseDir)).toEqual([]);
  }, 120_000);
});
