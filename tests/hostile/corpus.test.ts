/**
 * The hostile-input corpus: one table of bad (and a few good-but-odd) inputs across every command,
 * run in-process. Each error case must give its exit code, exactly one stderr line of the form
 * "rhofield: error: …" naming the culprit as the user typed it (option, path relative to the working
 * folder, or setup key with its file) and leave the working folder exactly as it was (no new files,
 * no staging folders inside or beside --out). Success cases must write only what they announce.
 */
import { appendFileSync, mkdtempSync, readdirSync, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { cli } from '../cliHarness.js';
import { writeCorpusFiles } from './fixtures.js';

const dir = mkdtempSync(path.join(os.tmpdir(), 'rf-hostile-'));
const startDir = process.cwd();

beforeAll(async () => {
  await writeCorpusFiles(dir);
  process.chdir(dir);
}, 120_000);
afterAll(() => process.chdir(startDir));

/** Every path under `root` with its size (folders end in /). */
function snapshot(root: string): Map<string, number> {
  const out = new Map<string, number>();
  const walk = (rel: string) => {
    for (const name of readdirSync(path.join(root, rel))) {
      const r = rel ? `${rel}/${name}` : name;
      const st = statSync(path.join(root, r));
      if (st.isDirectory()) {
        out.set(r + '/', 0);
        walk(r);
      } else out.set(r, st.size);
    }
  };
  walk('');
  return out;
}

interface Case {
  /** Command line (paths relative to the corpus folder, as a user would type them). */
  readonly args: readonly string[];
  readonly code: 0 | 2 | 3;
  /** Must appear in the error line (or, for code 0/3, in stderr). */
  readonly culprit: string | RegExp;
  /** For code 0: the new top-level entries expected (everything else must be unchanged). */
  readonly creates?: readonly string[];
}

const D = ['displacement', 'ref.png', 'meas.png', '--out', 'out-d', '--threads', '1'];
const DENS = (setup: string) => ['density', 'ref.png', 'meas.png', '--setup', setup, '--out', 'out-r', '--threads', '1'];
const PLAN = (setup: string) => ['plan', '--setup', setup];
const SIM = (setup: string, ...more: string[]) => ['simulate', '--setup', setup, '--field', 'gaussian', '--size', '64', ...more];
const PAT = ['pattern', '--width', '100mm', '--height', '80mm', '--dot', '1mm'];
const BATCH = ['batch', '--reference', 'frames/ref.png', '--frames', 'frames/frame_%05d.png', '--out', 'out-b', '--workers', '1'];

const CASES: Record<string, Case> = {
  // --- displacement: files
  'displacement: missing reference': { args: ['displacement', 'nope.png', 'meas.png', '--out', 'out-d'], code: 2, culprit: 'nope.png' },
  'displacement: missing measurement': { args: ['displacement', 'ref.png', 'gone/meas.png', '--out', 'out-d'], code: 2, culprit: 'gone/meas.png' },
  'displacement: a folder as image': { args: ['displacement', 'a-folder.png', 'meas.png', '--out', 'out-d'], code: 2, culprit: 'a-folder.png' },
  'displacement: empty file': { args: ['displacement', 'ref.png', 'empty.png', '--out', 'out-d'], code: 2, culprit: 'empty.png' },
  'displacement: text named .png': { args: ['displacement', 'text.png', 'meas.png', '--out', 'out-d'], code: 2, culprit: 'text.png' },
  'displacement: WebP (unsupported format)': { args: ['displacement', 'pic.webp', 'meas.png', '--out', 'out-d'], code: 2, culprit: /pic\.webp is a webp image/ },
  'displacement: TIFF cut to a third': { args: ['displacement', 'cut.tif', 'good.tif', '--out', 'out-d'], code: 2, culprit: /cut\.tif is damaged.*truncated/ },
  'displacement: PNG with a bad IHDR checksum': { args: ['displacement', 'bad-ihdr.png', 'good8.png', '--out', 'out-d'], code: 2, culprit: /bad-ihdr\.png is damaged.*IHDR/ },
  'displacement: PNG with a bad IDAT checksum': { args: ['displacement', 'good8.png', 'bad-idat.png', '--out', 'out-d'], code: 2, culprit: /bad-idat\.png is damaged.*IDAT/ },
  'displacement: PNG cut short': { args: ['displacement', 'cut.png', 'good8.png', '--out', 'out-d'], code: 2, culprit: /cut\.png is damaged/ },
  'displacement: images of different sizes': { args: ['displacement', 'ref.png', 'wide.png', '--out', 'out-d'], code: 2, culprit: /ref\.png is 128×128.*wide\.png is 160×128/ },
  'displacement: textureless reference': { args: ['displacement', 'flat.png', 'meas.png', '--out', 'out-d'], code: 2, culprit: /reference flat\.png has no texture/ },
  'displacement: unrelated images': { args: ['displacement', 'noise1.png', 'noise2.png', '--out', 'out-d', '--threads', '1'], code: 2, culprit: /noise2\.png does not match the reference noise1\.png.*--accept-mismatch/ },
  'displacement: unrelated images kept with --accept-mismatch': { args: ['displacement', 'noise1.png', 'noise2.png', '--out', 'out-d', '--threads', '1', '--accept-mismatch'], code: 0, culprit: /warning: noise2\.png does not match/, creates: ['out-d/'] },
  'displacement: unrelated dot images (wrong reference)': { args: ['displacement', 'other.png', 'meas.png', '--out', 'out-d', '--threads', '1'], code: 2, culprit: /meas\.png does not match the reference other\.png/ },
  'displacement: all-zero mask': { args: [...D, '--mask', 'mask-zero.png'], code: 2, culprit: /mask mask-zero\.png leaves 0 of/ },
  'displacement: mask leaving under 5 %': { args: [...D, '--mask', 'mask-few.png'], code: 2, culprit: /mask mask-few\.png leaves/ },
  'displacement: mask of another size': { args: [...D, '--mask', 'mask-small.png'], code: 2, culprit: /mask-small\.png is 64×64/ },
  'displacement: missing mask': { args: [...D, '--mask', 'no-mask.png'], code: 2, culprit: 'no-mask.png' },
  // --- displacement: options
  'displacement: --window not a power of two': { args: [...D, '--window', '24'], code: 2, culprit: '--window' },
  'displacement: --window too large': { args: [...D, '--window', '256'], code: 2, culprit: '--window' },
  'displacement: --window not a number': { args: [...D, '--window', 'big'], code: 2, culprit: '--window' },
  'displacement: --window larger than the image': { args: ['displacement', 'small-ref.png', 'small-meas.png', '--out', 'out-d', '--window', '64'], code: 2, culprit: /for --window but received 64/ },
  'displacement: --step 0': { args: [...D, '--step', '0'], code: 2, culprit: '--step' },
  'displacement: --passes 20': { args: [...D, '--passes', '20'], code: 2, culprit: '--passes' },
  'displacement: --threads 0': { args: [...D, '--threads', '0'], code: 2, culprit: '--threads' },
  'displacement: --flow-free with three numbers': { args: [...D, '--flow-free', '1,2,3'], code: 2, culprit: '--flow-free' },
  'displacement: --flow-free inverted': { args: [...D, '--flow-free', '40,40,10,10'], code: 2, culprit: /for --flow-free but received/ },
  'displacement: --flow-free outside the image': { args: [...D, '--flow-free', '5000,5000,6000,6000'], code: 2, culprit: /^rhofield: error: --flow-free \[5000, 5000, 6000, 6000\] contains no valid vector/ },
  'displacement: --ref-page negative': { args: [...D, '--ref-page', '-1'], code: 2, culprit: '--ref-page' },
  'displacement: --format unknown': { args: [...D, '--format', 'npy,xls'], code: 2, culprit: /for --format but received "xls"/ },
  'displacement: --format empty': { args: [...D, '--format', ','], code: 2, culprit: /for --format but/ },
  'displacement: --dpi without --figure-width': { args: [...D, '--dpi', '300'], code: 2, culprit: '--figure-width' },
  'displacement: --figure-width too small': { args: [...D, '--figure-width', '5'], code: 2, culprit: '--figure-width' },
  'displacement: --ref-page beyond a PNG': { args: [...D, '--ref-page', '3'], code: 2, culprit: /ref\.png has 1 page/ },
  'displacement: --out missing': { args: ['displacement', 'ref.png', 'meas.png'], code: 2, culprit: '--out' },
  'displacement: unknown option': { args: [...D, '--windwo', '32'], code: 2, culprit: '--windwo' },
  'unknown command': { args: ['displace', 'ref.png'], code: 2, culprit: 'displace' },
  // --- density: setup files
  'density: --setup missing': { args: ['density', 'ref.png', 'meas.png', '--out', 'out-r'], code: 2, culprit: '--setup' },
  'density: setup file not found': { args: DENS('no-such-setup.json'), code: 2, culprit: 'no-such-setup.json' },
  'density: setup not JSON': { args: DENS('not-json.json'), code: 2, culprit: /not-json\.json is not valid JSON at line 1/ },
  'density: empty setup file': { args: DENS('empty.json'), code: 2, culprit: 'empty.json' },
  'density: setup nested 100 000 deep': { args: DENS('deep.json'), code: 2, culprit: /deep\.json is nested more than 32/ },
  'density: setup nested 42 deep': { args: DENS('deep40.json'), code: 2, culprit: /deep40\.json is nested more than 32/ },
  'density: setup larger than 1 MiB': { args: DENS('huge.json'), code: 2, culprit: /huge\.json is \d+ bytes/ },
  'density: setup unknown key': { args: DENS('unknown-key.json'), code: 2, culprit: 'unknown-key.json: camera.focalLenght' },
  'density: setup unknown gas': { args: DENS('bad-gas.json'), code: 2, culprit: 'bad-gas.json: medium.gas' },
  'density: setup gas name in the wrong case': { args: DENS('gas-case.json'), code: 2, culprit: 'gas-case.json: medium.gas' },
  'density: setup negative distance': { args: DENS('negative.json'), code: 2, culprit: 'negative.json: geometry.lensToBackground' },
  'density: setup zero pixel pitch': { args: DENS('zero-pitch.json'), code: 2, culprit: 'zero-pitch.json: camera.pixelPitch' },
  'density: setup missing key': { args: DENS('missing-key.json'), code: 2, culprit: 'missing-key.json: geometry.flowToBackground' },
  'density: setup flow beyond the background': { args: DENS('order.json'), code: 2, culprit: 'order.json: geometry.flowToBackground' },
  'density: setup distance 1e300 m': { args: DENS('far300.json'), code: 2, culprit: /far300\.json: .*geometry\.lensToBackground 1e\+300.*not a finite/ },
  'density: setup distance 1e400 (infinite)': { args: DENS('infinite.json'), code: 2, culprit: 'infinite.json: geometry.lensToBackground' },
  'density: setup gas and gladstoneDale': { args: DENS('two-media.json'), code: 2, culprit: 'two-media.json: medium' },
  'density: setup mixture not summing to 1': { args: DENS('mixture.json'), code: 2, culprit: 'mixture.json: medium.mixture' },
  'density: setup unknown gas in a mixture': { args: DENS('mixture-name.json'), code: 2, culprit: 'mixture-name.json: medium.mixture.helium' },
  'density: setup number as a string': { args: DENS('string-number.json'), code: 2, culprit: 'string-number.json: camera.focalLength' },
  'density: setup wavelength in nm': { args: DENS('wavelength-nm.json'), code: 2, culprit: 'wavelength-nm.json: medium.wavelength' },
  'density: setup unknown flow type': { args: DENS('bad-flow.json'), code: 2, culprit: 'bad-flow.json: flow' },
  'density: setup an array': { args: DENS('array.json'), code: 2, culprit: 'array.json' },
  'density: reference rectangle outside the grid': { args: DENS('rect-outside.json'), code: 2, culprit: 'rect-outside.json: flow.reference.rectPx' },
  'density: origin outside the image (warning)': { args: DENS('origin-out.json'), code: 0, culprit: /warning: origin-out\.json: geometry\.originPx/, creates: ['out-r/'] },
  // --- plan
  'plan: setup file not found': { args: PLAN('nothing.json'), code: 2, culprit: 'nothing.json' },
  'plan: setup nested 100 000 deep': { args: PLAN('deep.json'), code: 2, culprit: 'deep.json' },
  'plan: distance 1e300 m': { args: PLAN('far300.json'), code: 2, culprit: /far300\.json: .*geometry\.lensToBackground/ },
  'plan: planned quantity overflows': { args: PLAN('plan-overflow.json'), code: 2, culprit: /plan-overflow\.json: the planned \w+ is .*flow\.span/ },
  'plan: no camera.sensorPx': { args: PLAN('no-sensor.json'), code: 2, culprit: 'no-sensor.json: camera.sensorPx' },
  'plan: no expected': { args: PLAN('no-expected.json'), code: 2, culprit: /no-expected\.json: expected/ },
  'plan: --noise negative': { args: [...PLAN('setup.json'), '--noise', '-1'], code: 2, culprit: '--noise' },
  'plan: --fill 0.9': { args: [...PLAN('setup.json'), '--fill', '0.9'], code: 2, culprit: '--fill' },
  'plan: --setup missing': { args: ['plan'], code: 2, culprit: '--setup' },
  'plan: distances beyond 1 km (warning)': { args: PLAN('km.json'), code: 0, culprit: /warning: km\.json: geometry\.lensToBackground is 2500 m, beyond 1 km/ },
  'plan: origin outside the sensor (warning)': { args: PLAN('origin-out.json'), code: 0, culprit: /warning: origin-out\.json: geometry\.originPx/ },
  // --- pattern
  'pattern: --out missing': { args: PAT, code: 2, culprit: '--out' },
  'pattern: --out of unknown type': { args: [...PAT, '--out', 'p.docx'], code: 2, culprit: /--out.*p\.docx/ },
  'pattern: --fill 0.9': { args: [...PAT, '--out', 'p.svg', '--fill', '0.9'], code: 2, culprit: '--fill' },
  'pattern: --width missing': { args: ['pattern', '--height', '80mm', '--dot', '1mm', '--out', 'p.svg'], code: 2, culprit: '--width' },
  'pattern: --width without a unit': { args: ['pattern', '--width', '100', '--height', '80mm', '--dot', '1mm', '--out', 'p.svg'], code: 2, culprit: '--width' },
  'pattern: --dot missing': { args: ['pattern', '--width', '100mm', '--height', '80mm', '--out', 'p.svg'], code: 2, culprit: '--dot' },
  'pattern: --dpi 10': { args: [...PAT, '--out', 'p.png', '--dpi', '10'], code: 2, culprit: '--dpi' },
  'pattern: --seed negative': { args: [...PAT, '--out', 'p.svg', '--seed', '-4'], code: 2, culprit: '--seed' },
  'pattern: --setup nested deep': { args: ['pattern', '--setup', 'deep.json', '--out', 'p.svg'], code: 2, culprit: 'deep.json' },
  'pattern: --setup not found': { args: ['pattern', '--setup', 'nothing.json', '--out', 'p.svg'], code: 2, culprit: 'nothing.json' },
  'pattern: --setup 1e300 m': { args: ['pattern', '--setup', 'far300.json', '--out', 'p.svg'], code: 2, culprit: 'far300.json' },
  'pattern: a valid SVG': { args: [...PAT, '--out', 'p.svg'], code: 0, culprit: /wrote p\.svg/, creates: ['p.svg'] },
  // --- check
  'check: missing file': { args: ['check', 'nope.png'], code: 2, culprit: 'nope.png' },
  'check: TIFF cut to a third': { args: ['check', 'cut.tif'], code: 2, culprit: /cut\.tif is damaged/ },
  'check: PNG with a bad checksum': { args: ['check', 'bad-idat.png'], code: 2, culprit: /bad-idat\.png is damaged/ },
  'check: pair of different sizes': { args: ['check', 'ref.png', 'wide.png'], code: 2, culprit: /ref\.png is 128×128.*wide\.png is 160×128/ },
  'check: --window 24': { args: ['check', 'ref.png', '--window', '24'], code: 2, culprit: '--window' },
  'check: --saturation negative': { args: ['check', 'ref.png', '--saturation', '-5'], code: 2, culprit: '--saturation' },
  'check: unrelated noise images (unusable)': { args: ['check', 'noise1.png', 'noise2.png'], code: 3, culprit: /FAIL.*do not show the same background/ },
  'check: unrelated dot images (unusable)': { args: ['check', 'other.png', 'meas.png'], code: 3, culprit: /FAIL.*do not show the same background/ },
  'check: a good pair': { args: ['check', 'ref.png', 'meas.png'], code: 0, culprit: /verdict: usable/ },
  // --- simulate
  'simulate: --field unknown': { args: ['simulate', '--setup', 'setup.json', '--field', 'vortex'], code: 2, culprit: '--field' },
  'simulate: --size 10': { args: SIM('setup.json').map((a) => (a === '64' ? '10' : a)), code: 2, culprit: '--size' },
  'simulate: --mach with gaussian': { args: SIM('setup.json', '--mach', '2'), code: 2, culprit: '--mach' },
  'simulate: --wedge beyond detachment': { args: ['simulate', '--setup', 'setup.json', '--field', 'shock', '--wedge', '40'], code: 2, culprit: '--wedge' },
  'simulate: setup nested deep': { args: SIM('deep.json'), code: 2, culprit: 'deep.json' },
  'simulate: setup 1e300 m': { args: SIM('far300.json'), code: 2, culprit: 'far300.json' },
  'simulate: no expected': { args: SIM('no-expected.json'), code: 2, culprit: 'no-expected.json: expected' },
  'simulate: --noise 2': { args: SIM('setup.json', '--noise', '2'), code: 2, culprit: '--noise' },
  // --- batch
  'batch: --pairing unknown': { args: [...BATCH, '--pairing', 'random'], code: 2, culprit: '--pairing' },
  'batch: --window 24': { args: [...BATCH, '--window', '24'], code: 2, culprit: '--window' },
  'batch: frames matching nothing': { args: ['batch', '--reference', 'frames/ref.png', '--frames', 'frames/none_%05d.png', '--out', 'out-b'], code: 2, culprit: 'frames/none_%05d.png' },
  'batch: reference missing': { args: ['batch', '--reference', 'frames/nothing.png', '--frames', 'frames/frame_%05d.png', '--out', 'out-b'], code: 2, culprit: 'frames/nothing.png' },
  'batch: setup nested deep': { args: [...BATCH, '--setup', 'deep.json'], code: 2, culprit: 'deep.json' },
  'batch: setup unknown key': { args: [...BATCH, '--setup', 'unknown-key.json'], code: 2, culprit: 'unknown-key.json: camera.focalLenght' },
  'batch: --format unknown': { args: [...BATCH, '--format', 'xls'], code: 2, culprit: '--format' },
  // --- view
  'view: unknown kind': { args: ['view', 'x-ray', 'res'], code: 2, culprit: 'x-ray' },
  'view: not a result folder': { args: ['view', 'colour', 'frames'], code: 2, culprit: 'frames' },
  'view: all-NaN field': { args: ['view', 'colour', 'res-nan'], code: 2, culprit: /res-nan\/displacement_dx\.npy holds no finite value/ },
  'view: damaged result.json': { args: ['view', 'colour', 'res-badjson'], code: 2, culprit: 'res-badjson/result.json' },
  'view: damaged .npy': { args: ['view', 'knife-edge', 'res-badnpy'], code: 2, culprit: 'res-badnpy/displacement_dx.npy' },
  'view: --levels unknown': { args: ['view', 'contour', 'res', '--levels', 'p'], code: 2, culprit: '--levels' },
  'view: --angle not a number': { args: ['view', 'knife-edge', 'res', '--angle', 'steep'], code: 2, culprit: '--angle' },
  'view: contour without density': { args: ['view', 'contour', 'res'], code: 2, culprit: 'res' },
  // --- merge
  'merge: not a batch folder': { args: ['merge', 'res'], code: 2, culprit: 'res' },
  'merge: partial.json cut short': { args: ['merge', 'bat-cut'], code: 2, culprit: 'bat-cut/shards/1-of-2/partial.json' },
  'merge: partial.json without fields': { args: ['merge', 'bat-empty'], code: 2, culprit: 'bat-empty/shards/1-of-2/partial.json' },
  'merge: a shard missing': { args: ['merge', 'bat-missing'], code: 2, culprit: /2\/2 of bat-missing/ },
  'merge: damaged accumulator': { args: ['merge', 'bat-badacc'], code: 2, culprit: 'bat-badacc/shards/1-of-2/dx_acc.npy' },
};

describe('hostile-input corpus', () => {
  it('has at least 60 cases over every command', () => {
    const names = Object.keys(CASES);
    expect(names.length).toBeGreaterThanOrEqual(60);
    for (const c of ['displacement', 'density', 'plan', 'pattern', 'check', 'simulate', 'batch', 'view', 'merge']) {
      expect(names.filter((n) => n.startsWith(c + ':')).length, c).toBeGreaterThan(0);
    }
  });

  for (const [name, c] of Object.entries(CASES)) {
    it(name, async () => {
      const before = snapshot(dir);
      const r = await cli(...c.args);
      const after = snapshot(dir);
      // whatever happens below, the next case starts from the same folder
      const cleanUp = () => {
        for (const k of after.keys()) if (!before.has(k) && !k.replace(/\/$/, '').includes('/')) rmSync(path.join(dir, k), { recursive: true, force: true });
      };
      try {
        // RHOFIELD_CORPUS_REPORT=FILE: append each case's exit code and stderr, for reading the messages
        const report = process.env['RHOFIELD_CORPUS_REPORT'];
        if (report) appendFileSync(report, `${name}\t${r.code}\t${r.err.trimEnd().replace(/\n/g, ' ⏎ ')}\n`);
        expect(r.code, r.err).toBe(c.code);
        const lines = r.err.trimEnd().split('\n');
        if (c.code === 2) {
          expect(lines, r.err).toHaveLength(1);
          expect(lines[0]).toMatch(/^rhofield: error: /);
          expect(lines[0]).not.toMatch(/undefined|\bat .*\.ts:\d+/);
        }
        if (typeof c.culprit === 'string') expect(r.err).toContain(c.culprit);
        else expect(r.err).toMatch(c.culprit);
        // nothing left behind: errors change nothing, successes add only what they announce
        const added = [...after.keys()].filter((k) => !before.has(k));
        const removed = [...before.keys()].filter((k) => !after.has(k));
        expect(removed).toEqual([]);
        for (const [k, size] of before) expect(after.get(k), `${k} unchanged`).toBe(size);
        const expected = c.code === 0 ? (c.creates ?? []) : [];
        expect(added.filter((k) => !k.replace(/\/$/, '').includes('/'))).toEqual(expected);
        // the manifest of a results folder is rhofield's own bookkeeping, not a leftover
        expect(added.filter((k) => /rhofield-partial|\.tmp-|(^|\/)\./.test(k) && !k.endsWith('/.rhofield-manifest.json'))).toEqual([]);
      } finally {
        cleanUp();
      }
    });
  }
});
