import { parseSetup, type Setup, type Field } from '@rhofield/core';
// the correlate barrel does not re-export its types yet; import them from their file
import type { DisplacementField, VectorGrid } from '../../packages/core/src/correlate/types.js';

/** A test rig: f = 0.1 m, p = 5 µm, Z_B = 2.1 m, Z_D = 1.05 m → M = 0.05, 50 µm per pixel in the flow plane. */
export function rig(flow: Record<string, unknown>, medium: Record<string, unknown> = {}): Setup {
  return parseSetup({
    camera: { focalLength: 0.1, pixelPitch: 5e-6 },
    geometry: { lensToBackground: 2.1, flowToBackground: 1.05 },
    medium: { gas: 'air', wavelength: 532e-9, referenceDensity: 1.2, ...medium },
    flow,
  });
}

export function grid(imageW: number, imageH: number, step: number): VectorGrid {
  const cols = Math.floor((imageW - step) / step) + 1;
  const rows = Math.floor((imageH - step) / step) + 1;
  const xPx = Float64Array.from({ length: cols }, (_, i) => step / 2 - 0.5 + i * step);
  const yPx = Float64Array.from({ length: rows }, (_, i) => step / 2 - 0.5 + i * step);
  return { cols, rows, xPx, yPx, imageWidth: imageW, imageHeight: imageH };
}

export function displacementField(g: VectorGrid, dxPx: Field, dyPx: Field): DisplacementField {
  const n = g.cols * g.rows;
  const status = new Uint8Array(n);
  for (let i = 0; i < n; i++) if (!Number.isFinite(dxPx.data[i]!)) status[i] = 2;
  return {
    grid: g,
    dxPx,
    dyPx,
    peakRatio: { width: g.cols, height: g.rows, data: new Float32Array(n).fill(10) },
    correlation: { width: g.cols, height: g.rows, data: new Float32Array(n).fill(0.9) },
    status,
  };
}
