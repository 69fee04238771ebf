/**
 * Shadowgraph from a measured vector field: the divergence of the deflection field. A shadowgraph
 * screen at distance L shows ΔI/I ≈ −L ∇·ε, and ∇·ε ∝ ∇²∫n dz, the Laplacian of the
 * path-integrated refractive index (Settles, "Schlieren and Shadowgraph Techniques", Springer,
 * 2001, ch. 6; Merzkirch, "Flow Visualization", 1987).
 *
 * Discretisation: second-order central differences on the vector grid, one-sided first-order
 * differences at the edges and next to NaN cells; NaN where neither neighbour exists.
 */
import { invalidParameter } from '../util/errors.js';
import type { Field } from '../util/field.js';
import { maxAbs } from './knifeEdge.js';
import { checkPair, type ScalarView } from './types.js';

function derivative(f: Float32Array, i: number, k: number, stride: number, n: number, h: number): number {
  const c = f[i]!;
  const lo = k > 0 ? f[i - stride]! : NaN;
  const hi = k < n - 1 ? f[i + stride]! : NaN;
  if (Number.isFinite(lo) && Number.isFinite(hi)) return (hi - lo) / (2 * h);
  if (!Number.isFinite(c)) return NaN;
  if (Number.isFinite(hi)) return (hi - c) / h;
  if (Number.isFinite(lo)) return (c - lo) / h;
  return NaN;
}

/**
 * Divergence ∂εx/∂x + ∂εy/∂y of a vector field on a uniform grid (image frame: x right, y down for
 * both the coordinates and the components, so the result is frame-independent).
 * @param x x component; @param y y component (+y down); same grid.
 * @param hx column spacing (> 0, e.g. metres or px); @param hy row spacing (> 0).
 * @returns the divergence in input unit per spacing unit; NaN where it cannot be formed.
 */
export function divergence(x: Field, y: Field, hx: number, hy: number): Field {
  if (!(hx > 0)) throw invalidParameter('grid spacing hx', 'a positive spacing', hx);
  if (!(hy > 0)) throw invalidParameter('grid spacing hy', 'a positive spacing', hy);
  checkPair(x, y);
  const W = x.width;
  const H = x.height;
  const out = new Float32Array(W * H);
  for (let r = 0; r < H; r++) {
    for (let c = 0; c < W; c++) {
      const i = c + r * W;
      const ddx = W > 1 ? derivative(x.data, i, c, 1, W, hx) : 0;
      const ddy = H > 1 ? derivative(y.data, i, r, W, H, hy) : 0;
      out[i] = ddx + ddy;
    }
  }
  return { width: W, height: H, data: out };
}

/**
 * Shadowgraph view: `field` = ∇·ε, shown on a grey scale with the sign reversed so that converging
 * rays (∇·ε < 0) appear bright and diverging rays dark, as on a shadowgraph screen.
 * @param options `hx`, `hy` grid spacing; `unit` of the result (e.g. 'rad/m'); `range` half-width.
 */
export function shadowgraphView(x: Field, y: Field, options: { hx: number; hy: number; unit: string; range?: number }): ScalarView {
  const div = divergence(x, y, options.hx, options.hy);
  const r = options.range ?? (maxAbs(div) || 1);
  // display −div so that bright = converging (grey map: high = white)
  const shown = new Float32Array(div.data.length);
  for (let i = 0; i < shown.length; i++) shown[i] = -div.data[i]!;
  return {
    kind: 'shadowgraph',
    field: { width: div.width, height: div.height, data: shown },
    range: [-r, r],
    colormap: 'grey',
    quantity: 'shadowgraph signal −∇·ε',
    unit: options.unit,
  };
}
