/**
 * End to end on synthetic image pairs (512×512 px, 16 px final windows every 8 px — the CI-sized
 * version of bench/cases/endToEnd.ts, which runs 1024×1024 px with the same tolerances):
 * dots rendered through a known density field → measureDisplacement → reconstructDensity.
 * Metrics and their regions are defined in scenarios.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeWorkers } from '@rhofield/core';
import {
  axisymmetricCheck,
  LAB_PIXEL_M,
  NACA1135_DENSITY_RATIO_M2_THETA10,
  planarCheck,
  shockCheck,
  TUNNEL_PIXEL_M,
  type AxisymmetricCheck,
  type PlanarCheck,
  type ShockCheck,
} from './scenarios.js';

const SIZE = 512;
const WINDOW = 16;

afterAll(() => closeWorkers());

describe('planar Gaussian hot spot (Δρ = −0.1 kg/m³, σ = 3 windows = 48 px, 50 mm span)', () => {
  let c: PlanarCheck;
  beforeAll(async () => {
    c = await planarCheck({ sizePx: SIZE, windowPx: WINDOW, seed: 7, threads: 1 }, 3);
  });
  it('flow-plane pixel is the hand-worked 47.5 µm (5 µm · 1.0 m · 1.9 m / (0.1 m · 2.0 m))', () => {
    expect(c.run.density.pixelSizeM).toBeCloseTo(LAB_PIXEL_M, 12);
  });
  it('displacements of a few pixels at most', () => {
    expect(c.run.peakDisplacementPx).toBeGreaterThan(1);
    expect(c.run.peakDisplacementPx).toBeLessThan(5);
  });
  it('RMS error over every grid node, anchored on the top edge, ≤ 2 % of |Δρ|', () => {
    expect(c.rmsRelative).toBeLessThan(0.02);
    expect(Math.abs(c.centreRatio - 1)).toBeLessThan(0.03);
  });

  // Sign is physical, end to end, with hand-written expectations (rays bend toward higher index): a hot spot has its lowest
  // refractive index at the centre and acts as a diverging lens; rays bend toward higher n, i.e. away
  // from the centre, so the camera sees, through the flow, background points lying further out — each
  // dot appears drawn TOWARD the centre (as a mirage shows the sky below a hot road). Image frame:
  // +x right, +y down (rows).
  it('measured from the images: dots right of the hot spot move left, left of it move right', () => {
    const { grid, dxPx, dyPx } = c.run.displacement;
    const mid = (grid.cols - 1) / 2; // grid is symmetric about the image centre (spot centre)
    const k = c.sigmaPx / 8; // one σ away, in grid steps (8 px)
    const row = Math.round(mid);
    const right = Math.round(mid + k) + row * grid.cols;
    const left = Math.round(mid - k) + row * grid.cols;
    expect(dxPx.data[right]!).toBeLessThan(-0.5);
    expect(dxPx.data[left]!).toBeGreaterThan(0.5);
    expect(Math.abs(dyPx.data[right]!)).toBeLessThan(0.2);
  });
  it('measured from the images: dots below the hot spot (larger row) move up (dy < 0), above it move down', () => {
    const { grid, dxPx, dyPx } = c.run.displacement;
    const mid = (grid.rows - 1) / 2;
    const k = c.sigmaPx / 8;
    const col = Math.round(mid);
    const below = col + Math.round(mid + k) * grid.cols;
    const above = col + Math.round(mid - k) * grid.cols;
    expect(dyPx.data[below]!).toBeLessThan(-0.5);
    expect(dyPx.data[above]!).toBeGreaterThan(0.5);
    expect(Math.abs(dxPx.data[below]!)).toBeLessThan(0.2);
  });
  it('the hot spot comes out less dense (and hotter) than the room: ρ at the centre < 1.2 − 0.09 kg/m³', () => {
    const { grid } = c.run.displacement;
    const centre = Math.round((grid.cols - 1) / 2) + Math.round((grid.rows - 1) / 2) * grid.cols;
    expect(c.run.density.rho.data[centre]!).toBeLessThan(1.2 - 0.09);
    // ideal gas at 101325 Pa: T = p/(ρR) = 101325/(1.2·287.05) = 294.2 K far away (hand-worked); hotter inside
    expect(c.run.density.temperature!.data[0]!).toBeCloseTo(294.2, 0);
    expect(c.run.density.temperature!.data[centre]!).toBeGreaterThan(315);
  });
});

describe('axisymmetric Gaussian deficit (warm round jet, Δρ = −0.2 kg/m³ on the axis, std 3 windows)', () => {
  let c: AxisymmetricCheck;
  beforeAll(async () => {
    c = await axisymmetricCheck({ sizePx: SIZE, windowPx: WINDOW, seed: 7, threads: 1 }, 3);
  });
  it('axis found by symmetry within 0.5 px', () => {
    expect(Math.abs(c.axisFoundPx - c.axisPx)).toBeLessThan(0.5);
  });
  it('centre-line Δρ (mean over all rows) within 3 % of the true Δρ; no single row off by more than 6 %', () => {
    expect(c.centreLineRows).toBeGreaterThan(50);
    expect(Math.abs(c.centreLineMeanError)).toBeLessThan(0.03);
    // one row is one line of windows: its own noise is larger (measured ≈ 1 % RMS, see bench)
    expect(Math.abs(c.centreLineWorstRowError)).toBeLessThan(0.06);
  });
});

describe('wedge, 10° half-angle at Mach 2 (γ = 1.4), shocks smoothed by σ = 8 px, body masked', () => {
  let c: ShockCheck;
  beforeAll(async () => {
    c = await shockCheck({ sizePx: SIZE, windowPx: WINDOW, seed: 7, threads: 1 }, 8, 2);
  });
  it('flow-plane pixel is the hand-worked 80.75 µm (5 µm · 1.7 m · 1.9 m / (0.1 m · 2.0 m))', () => {
    expect(c.run.density.pixelSizeM).toBeCloseTo(TUNNEL_PIXEL_M, 12);
  });
  it('shock angle 39.31° (NACA Report 1135, 1953, oblique-shock chart, M = 2, θ = 10°)', () => {
    expect(c.shockAngleDeg).toBeCloseTo(39.31, 1);
  });
  it('displacements of a few pixels at most', () => {
    expect(c.run.peakDisplacementPx).toBeGreaterThan(1);
    expect(c.run.peakDisplacementPx).toBeLessThan(5);
  });
  it(`plateau ≥ 2 windows behind the shock: ρ₂ − ρ₁ within 3 % of ρ₁·(${NACA1135_DENSITY_RATIO_M2_THETA10} − 1) (NACA Report 1135, 1953)`, () => {
    expect(c.plateauNodes).toBeGreaterThan(200);
    expect(Math.abs(c.jumpErrorAnchored)).toBeLessThan(0.03);
    expect(Math.abs(c.jumpErrorLocal)).toBeLessThan(0.03);
    expect(Math.abs(c.densityRatio - NACA1135_DENSITY_RATIO_M2_THETA10)).toBeLessThan(0.03 * 0.45843);
  });
});
