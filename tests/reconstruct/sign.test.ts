/**
 * The sign is physical — reconstruction side, without the scene generator: a displacement field typed
 * here by hand, with every dot drawn toward one point, must come out as a LESS dense (hot) spot there.
 *
 * Argument: rays bend toward higher refractive index. A hot, low-density spot has its lowest
 * n at the centre, so it is a diverging lens: a ray passing right of the centre bends further right, and
 * the camera sees, there, background that lies further out — the dot pattern appears drawn toward the
 * centre (a mirage shows the sky below a hot road). Conversely, dots pushed away from a point mean a
 * denser (cold) spot. The end-to-end version, from rendered images, is in tests/endToEnd.
 */
import { describe, expect, it } from 'vitest';
import { reconstructDensity, type Field } from '@rhofield/core';
import { displacementField, grid, rig } from './helpers.js';

const g = grid(256, 256, 8); // 32 × 32 vectors, centre of the grid at image (127.5, 127.5)
const cx = 127.5;
const cy = 127.5;

/** dx, dy = s · (centre − position) · exp(−r²/(2·40²)): toward the centre for s > 0 (image frame, y down). */
function radial(s: number): { dx: Field; dy: Field } {
  const dx = new Float32Array(g.cols * g.rows);
  const dy = new Float32Array(g.cols * g.rows);
  for (let r = 0; r < g.rows; r++) for (let c = 0; c < g.cols; c++) {
    const x = g.xPx[c]!;
    const y = g.yPx[r]!;
    const w = s * Math.exp(-((x - cx) ** 2 + (y - cy) ** 2) / (2 * 40 * 40));
    dx[c + r * g.cols] = w * (cx - x);
    dy[c + r * g.cols] = w * (cy - y);
  }
  return { dx: { width: g.cols, height: g.rows, data: dx }, dy: { width: g.cols, height: g.rows, data: dy } };
}

describe('sign of the density from a hand-written displacement field', () => {
  const setup = rig({ type: 'planar', span: 0.05, reference: 'top' });
  const centre = 16 + 16 * g.cols; // node at (131.5, 131.5), 4 px from the centre
  it('dots drawn toward the centre (dx < 0 right of it, dy < 0 below it) → less dense than the room there', () => {
    const { dx, dy } = radial(0.02); // up to 0.02·40·e^(−1/2) ≈ 0.5 px
    expect(dx.data[24 + 16 * g.cols]!).toBeLessThan(0); // right of the centre: moves left
    expect(dy.data[16 + 24 * g.cols]!).toBeLessThan(0); // below (larger row): moves up
    const r = reconstructDensity(displacementField(g, dx, dy), setup);
    expect(r.rho.data[centre]!).toBeLessThan(1.2 - 0.001);
    expect(r.rho.data[centre]!).toBeCloseTo(r.summary.min, 6);
  });
  it('dots pushed away from the centre → denser than the room there', () => {
    const { dx, dy } = radial(-0.02);
    const r = reconstructDensity(displacementField(g, dx, dy), setup);
    expect(r.rho.data[centre]!).toBeGreaterThan(1.2 + 0.001);
    expect(r.rho.data[centre]!).toBeCloseTo(r.summary.max, 6);
  });
});
