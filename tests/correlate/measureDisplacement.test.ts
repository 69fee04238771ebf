import { afterAll, describe, expect, it } from 'vitest';
import { closeWorkers, describeSchedule, measureDisplacement, RhofieldError, synthPair, VectorStatus, type Field } from '@rhofield/core';

afterAll(() => closeWorkers());

/** Ground truth: the displacement given to the project's own dot renderer (synthPair). */
function rmsError(r: Awaited<ReturnType<typeof measureDisplacement>>, dx: number, dy: number): number {
  let s = 0;
  let n = 0;
  for (let k = 0; k < r.dxPx.data.length; k++) {
    if (r.status[k] === VectorStatus.masked) continue;
    s += (r.dxPx.data[k]! - dx) ** 2 + (r.dyPx.data[k]! - dy) ** 2;
    n += 2;
  }
  return Math.sqrt(s / n);
}

describe('measureDisplacement(ref, meas, options)', () => {
  it('256×256, uniform (1.37, −0.61) px: RMS error < 0.05 px, in-process and with worker threads alike', async () => {
    const { ref, meas } = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 21, displacement: { kind: 'uniform', dx: 1.37, dy: -0.61 } });
    const one = await measureDisplacement(ref, meas, { threads: 1 });
    const two = await measureDisplacement(ref, meas, { threads: 2 });
    expect(rmsError(one, 1.37, -0.61)).toBeLessThan(0.05);
    expect(Array.from(two.dxPx.data)).toEqual(Array.from(one.dxPx.data));
    expect(Array.from(two.dyPx.data)).toEqual(Array.from(one.dyPx.data));
    expect(one.counts.valid + one.counts.replaced).toBe(one.grid.cols * one.grid.rows);
    for (const c of one.correlation.data) expect(c > 0.5 && c <= 1).toBe(true);
    for (const p of one.peakRatio.data) expect(p).toBeGreaterThan(1);
  });

  it('sign convention: dots moved right and down give positive dx and dy (measured minus reference)', async () => {
    const { ref, meas } = synthPair({ width: 128, height: 128, diameterPx: 3, seed: 2, displacement: { kind: 'uniform', dx: 2.2, dy: 1.1 } });
    const r = await measureDisplacement(ref, meas, { threads: 1, windowPx: 32 });
    const i = r.dxPx.data.length >> 1;
    expect(r.dxPx.data[i]).toBeCloseTo(2.2, 1);
    expect(r.dyPx.data[i]).toBeCloseTo(1.1, 1);
  });

  it('windows cut from a larger image shifted by whole pixels (not circularly) recover the shift', async () => {
    const big = synthPair({ width: 300, height: 300, diameterPx: 2.8, seed: 8 }).ref;
    const crop = (f: Field, x0: number, y0: number): Field => {
      const data = new Float32Array(256 * 256);
      for (let y = 0; y < 256; y++) for (let x = 0; x < 256; x++) data[x + y * 256] = f.data[x + x0 + (y + y0) * f.width]!;
      return { width: 256, height: 256, data };
    };
    for (const [sx, sy] of [
      [3, 0],
      [0, -2],
      [5, 4],
    ] as const) {
      const ref = crop(big, 20, 20);
      const meas = crop(big, 20 - sx, 20 - sy); // meas(x) = ref(x − s): content moved by +s
      const single = await measureDisplacement(ref, meas, { threads: 1, passes: 1 });
      const multi = await measureDisplacement(ref, meas, { threads: 1 });
      for (let k = 0; k < single.dxPx.data.length; k++) {
        expect(Math.round(single.dxPx.data[k]!) === sx).toBe(true);
        expect(Math.round(single.dyPx.data[k]!) === sy).toBe(true);
      }
      // multi-pass: the predictor is not exactly whole (a noisy coarse pass), so a small residual remains
      expect(rmsError(multi, sx, sy)).toBeLessThan(0.01);
    }
  });

  it('identical images give zero displacement (to round-off)', async () => {
    const { ref } = synthPair({ width: 128, height: 128, diameterPx: 2.8, seed: 4 });
    const r = await measureDisplacement(ref, ref, { threads: 1 });
    for (const v of r.dxPx.data) expect(Math.abs(v)).toBeLessThan(1e-9);
    for (const v of r.dyPx.data) expect(Math.abs(v)).toBeLessThan(1e-9);
  });

  it('masked windows get status masked and NaN; a flow-free region removes camera shake', async () => {
    const { ref, meas } = synthPair({ width: 192, height: 192, diameterPx: 2.8, seed: 6, displacement: { kind: 'uniform', dx: 1.3, dy: 0.4 } });
    const mask = { width: 192, height: 192, data: new Uint8Array(192 * 192).fill(1) };
    for (let y = 60; y < 140; y++) for (let x = 60; x < 140; x++) mask.data[x + y * 192] = 0;
    const r = await measureDisplacement(ref, meas, { threads: 1, mask, flowFreeRegionPx: [0, 0, 191, 40] });
    expect(r.counts.masked).toBeGreaterThan(0);
    for (let row = 0; row < r.grid.rows; row++)
      for (let col = 0; col < r.grid.cols; col++) {
        const k = col + row * r.grid.cols;
        const x = r.grid.xPx[col]!;
        const y = r.grid.yPx[row]!;
        if (x > 62 && x < 138 && y > 62 && y < 138) {
          expect(r.status[k]).toBe(VectorStatus.masked);
          expect(r.dxPx.data[k]).toBeNaN();
        }
        if (r.status[k] !== VectorStatus.masked) {
          expect(Math.abs(r.dxPx.data[k]!)).toBeLessThan(0.05);
          expect(Math.abs(r.dyPx.data[k]!)).toBeLessThan(0.05);
        }
      }
    expect(r.shakePx!.dx).toBeCloseTo(1.3, 1);
    expect(r.shakePx!.dy).toBeCloseTo(0.4, 1);
  });

  describe('rejects bad input with a RhofieldError naming the option', () => {
    const { ref, meas } = synthPair({ width: 64, height: 64, diameterPx: 3, seed: 1 });
    const cases: [string, () => Promise<unknown>, RegExp][] = [
      ['size mismatch', () => measureDisplacement(ref, { width: 64, height: 32, data: new Float32Array(64 * 32) }), /64×64.*64×32/],
      ['window not a power of two', () => measureDisplacement(ref, meas, { windowPx: 24 }), /windowPx/],
      ['window too small', () => measureDisplacement(ref, meas, { windowPx: 8 }), /windowPx/],
      ['window larger than the image', () => measureDisplacement(ref, meas, { windowPx: 128 }), /64×64.*windowPx/],
      ['step 0', () => measureDisplacement(ref, meas, { stepPx: 0 }), /stepPx/],
      ['step not integer', () => measureDisplacement(ref, meas, { stepPx: 1.5 }), /stepPx/],
      ['passes 0', () => measureDisplacement(ref, meas, { passes: 0 }), /passes/],
      ['threads 0', () => measureDisplacement(ref, meas, { threads: 0 }), /threads/],
      ['median threshold', () => measureDisplacement(ref, meas, { medianThreshold: -1 }), /medianThreshold/],
      ['mask size', () => measureDisplacement(ref, meas, { mask: { width: 32, height: 32, data: new Uint8Array(1024) } }), /mask.*32×32/],
      ['flow-free region', () => measureDisplacement(ref, meas, { flowFreeRegionPx: [10, 10, 5, 5] }), /flowFreeRegionPx/],
      ['interpolation', () => measureDisplacement(ref, meas, { interpolation: 'linear' as 'lanczos4' }), /interpolation/],
      [
        'uniform image',
        () => measureDisplacement({ width: 64, height: 64, data: new Float32Array(4096).fill(100) }, meas),
        /reference image has no texture \(standard deviation 0\.00\); check the file\/exposure/,
      ],
    ];
    for (const [what, call, message] of cases)
      it(what, async () => {
        await expect(call()).rejects.toThrow(RhofieldError);
        await expect(call()).rejects.toThrow(message);
      });
  });

  it('describeSchedule lists every pass and the median test', () => {
    const text = describeSchedule({ windowPx: 32, stepPx: 16, passes: 3 });
    expect(text).toMatch(/pass 1: 64 px windows every 64 px/);
    expect(text).toMatch(/pass 3: 32 px windows every 16 px/);
    expect(text).toMatch(/normalized median test/);
  });
});

describe('measureDisplacement: single pass and median test defaults', () => {
  it('single pass, uniform (7.43, −4.46) px on 256×256: RMS error < 0.06 px (discrete window offset removes the loss of pairs)', async () => {
    const { ref, meas } = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 31, displacement: { kind: 'uniform', dx: 7.43, dy: -4.46 } });
    const r = await measureDisplacement(ref, meas, { threads: 1, passes: 1 });
    expect(rmsError(r, 7.43, -4.46)).toBeLessThan(0.06);
  });

  it('sine of 64 px wavelength sampled at its crests: the default median test keeps crests the published form replaces', async () => {
    // truth: the displacement given to synthPair; a 3×3 median sees each crest as an outlier
    const f = (x: number): [number, number] => [2 * Math.sin((2 * Math.PI * x) / 64), 0];
    const { ref, meas } = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: 7, displacement: (x) => f(x) });
    const def = await measureDisplacement(ref, meas, { threads: 1, windowPx: 32, stepPx: 16 });
    const pub = await measureDisplacement(ref, meas, { threads: 1, windowPx: 32, stepPx: 16, medianKeepPeakRatio: Infinity, medianKeepCorrelation: Infinity });
    const crestError = (r: typeof def): number => {
      let s = 0;
      let n = 0;
      for (let j = 2; j < r.grid.rows - 2; j++)
        for (let i = 2; i < r.grid.cols - 2; i++) {
          const t = f(r.grid.xPx[i]!)[0];
          if (Math.abs(t) < 1.9) continue;
          s += (r.dxPx.data[i + j * r.grid.cols]! - t) ** 2;
          n++;
        }
      return Math.sqrt(s / n);
    };
    // measured (seed 7): crest RMS error 0.74 px with the defaults, 1.44 px with the published test
    expect(def.counts.replaced).toBeLessThan(pub.counts.replaced / 2);
    expect(crestError(def)).toBeLessThan(0.7 * crestError(pub));
  });

  it('a patch of unrelated dots in the measurement image: the vectors inside it are flagged and replaced (the keep rule keeps no spurious peak)', async () => {
    // truth: uniform (1.3, −0.7) px everywhere; inside a 48×48 patch the measurement shows other dots,
    // so any peak found there is spurious (its normalized correlation stays near 0.2–0.35)
    for (const seed of [3, 4, 5]) {
      const p = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed, displacement: { kind: 'uniform', dx: 1.3, dy: -0.7 } });
      const q = synthPair({ width: 256, height: 256, diameterPx: 2.8, seed: seed + 100, displacement: { kind: 'uniform', dx: 0, dy: 0 } });
      const x0 = 96;
      const S = 48;
      for (let y = x0; y < x0 + S; y++) for (let x = x0; x < x0 + S; x++) p.meas.data[x + y * 256] = q.meas.data[x + y * 256]!;
      const r = await measureDisplacement(p.ref, p.meas, { threads: 1, windowPx: 32 });
      let inside = 0;
      for (let j = 0; j < r.grid.rows; j++)
        for (let i = 0; i < r.grid.cols; i++) {
          const x = r.grid.xPx[i]!;
          const y = r.grid.yPx[j]!;
          if (!(x - 15.5 >= x0 && x + 15.5 < x0 + S && y - 15.5 >= x0 && y + 15.5 < x0 + S)) continue;
          const k = i + j * r.grid.cols;
          inside++;
          expect(r.status[k], `seed ${seed} (${x}, ${y})`).toBe(1); // replaced
          expect(Math.hypot(r.dxPx.data[k]! - 1.3, r.dyPx.data[k]! + 0.7)).toBeLessThan(0.25);
        }
      expect(inside).toBe(4);
    }
  });
});
