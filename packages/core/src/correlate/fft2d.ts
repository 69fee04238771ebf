/**
 * In-place 2-D complex FFT of an n × n array (n a power of two, interleaved re/im, row-major) for the
 * window correlator. Radix-2 decimation in time (Cooley & Tukey 1965; e.g. Press et al., Numerical
 * Recipes, 3rd ed. 2007, §12.2) with pairs of stages merged into one pass over four rows (radix 2²), organised so that every butterfly pass runs over whole rows: the
 * transform along y combines row vectors with one twiddle factor per row pair (a contiguous inner loop),
 * then the array is transposed and the same is done again. The forward result is therefore the
 * spectrum transposed (storage row = kx, column = ky); {@link Fft2d.inverse} takes that layout and
 * returns the array in its original orientation. Neither direction is normalised.
 */
export class Fft2d {
  readonly n: number;
  private readonly rev: Int32Array;
  private readonly cos: Float64Array;
  private readonly sin: Float64Array;

  constructor(n: number) {
    if (!(n >= 2 && (n & (n - 1)) === 0)) throw new Error(`Fft2d: size ${n} is not a power of two ≥ 2`);
    this.n = n;
    const bits = Math.log2(n);
    this.rev = new Int32Array(n);
    for (let i = 0; i < n; i++) {
      let r = 0;
      for (let b = 0; b < bits; b++) if (i & (1 << b)) r |= 1 << (bits - 1 - b);
      this.rev[i] = r;
    }
    this.cos = new Float64Array(n / 2);
    this.sin = new Float64Array(n / 2);
    for (let k = 0; k < n / 2; k++) {
      this.cos[k] = Math.cos((2 * Math.PI * k) / n);
      this.sin[k] = Math.sin((2 * Math.PI * k) / n);
    }
  }

  /** Forward transform (e^{−2πi k·x/n}); output transposed (row = kx, column = ky). */
  forward(buf: Float64Array): void {
    this.alongY(buf, -1);
    this.transpose(buf);
    this.alongY(buf, -1);
  }

  /** Inverse transform (e^{+2πi k·x/n}, no 1/n² factor) of a transposed spectrum. */
  inverse(buf: Float64Array): void {
    this.alongY(buf, 1);
    this.transpose(buf);
    this.alongY(buf, 1);
  }

  /** 1-D transforms of every column, done on whole rows. */
  private alongY(buf: Float64Array, sign: number): void {
    const n = this.n;
    const n2 = 2 * n;
    const rev = this.rev;
    for (let r = 0; r < n; r++) {
      const q = rev[r]!;
      if (q <= r) continue;
      const a = r * n2;
      const b = q * n2;
      for (let j = 0; j < n2; j++) {
        const t = buf[a + j]!;
        buf[a + j] = buf[b + j]!;
        buf[b + j] = t;
      }
    }
    const C = this.cos;
    const S = this.sin;
    let half = 1;
    if ((Math.log2(n) & 1) === 1) {
      // odd number of radix-2 stages: the first (twiddle 1) on its own
      for (let g = 0; g < n; g += 2) {
        const p = g * n2;
        const q = p + n2;
        for (let j = 0; j < n2; j++) {
          const a = buf[p + j]!;
          const b = buf[q + j]!;
          buf[p + j] = a + b;
          buf[q + j] = a - b;
        }
      }
      half = 2;
    }
    // two radix-2 stages (half h, then 2h) merged into one pass over four rows
    for (; half < n; half <<= 2) {
      const span = 4 * half;
      const s1 = n / (2 * half);
      const s2 = s1 >> 1;
      // k = 0: both twiddles 1
      for (let g = 0; g < n; g += span) {
        const p0 = g * n2;
        const p1 = p0 + half * n2;
        const p2 = p1 + half * n2;
        const p3 = p2 + half * n2;
        for (let j = 0; j < n2; j += 2) {
          const x0r = buf[p0 + j]!;
          const x0i = buf[p0 + j + 1]!;
          const x1r = buf[p1 + j]!;
          const x1i = buf[p1 + j + 1]!;
          const x2r = buf[p2 + j]!;
          const x2i = buf[p2 + j + 1]!;
          const x3r = buf[p3 + j]!;
          const x3i = buf[p3 + j + 1]!;
          const y0r = x0r + x1r;
          const y0i = x0i + x1i;
          const y1r = x0r - x1r;
          const y1i = x0i - x1i;
          const y2r = x2r + x3r;
          const y2i = x2i + x3i;
          const u3r = -sign * (x2i - x3i);
          const u3i = sign * (x2r - x3r);
          buf[p0 + j] = y0r + y2r;
          buf[p0 + j + 1] = y0i + y2i;
          buf[p2 + j] = y0r - y2r;
          buf[p2 + j + 1] = y0i - y2i;
          buf[p1 + j] = y1r + u3r;
          buf[p1 + j + 1] = y1i + u3i;
          buf[p3 + j] = y1r - u3r;
          buf[p3 + j + 1] = y1i - u3i;
        }
      }
      for (let k = 1; k < half; k++) {
        const w1r = C[k * s1]!;
        const w1i = sign * S[k * s1]!;
        const w2r = C[k * s2]!;
        const w2i = sign * S[k * s2]!;
        for (let g = k; g < n; g += span) {
          const p0 = g * n2;
          const p1 = p0 + half * n2;
          const p2 = p1 + half * n2;
          const p3 = p2 + half * n2;
          for (let j = 0; j < n2; j += 2) {
            const x1r = buf[p1 + j]!;
            const x1i = buf[p1 + j + 1]!;
            const x3r = buf[p3 + j]!;
            const x3i = buf[p3 + j + 1]!;
            const t1r = x1r * w1r - x1i * w1i;
            const t1i = x1r * w1i + x1i * w1r;
            const t3r = x3r * w1r - x3i * w1i;
            const t3i = x3r * w1i + x3i * w1r;
            const x0r = buf[p0 + j]!;
            const x0i = buf[p0 + j + 1]!;
            const x2r = buf[p2 + j]!;
            const x2i = buf[p2 + j + 1]!;
            const y0r = x0r + t1r;
            const y0i = x0i + t1i;
            const y1r = x0r - t1r;
            const y1i = x0i - t1i;
            const y2r = x2r + t3r;
            const y2i = x2i + t3i;
            const y3r = x2r - t3r;
            const y3i = x2i - t3i;
            const u2r = y2r * w2r - y2i * w2i;
            const u2i = y2r * w2i + y2i * w2r;
            // second-stage twiddle of the odd pair: w2 · e^{sign·iπ/2} = w2 · (sign·i)
            const u3r = -sign * (y3r * w2i + y3i * w2r);
            const u3i = sign * (y3r * w2r - y3i * w2i);
            buf[p0 + j] = y0r + u2r;
            buf[p0 + j + 1] = y0i + u2i;
            buf[p2 + j] = y0r - u2r;
            buf[p2 + j + 1] = y0i - u2i;
            buf[p1 + j] = y1r + u3r;
            buf[p1 + j + 1] = y1i + u3i;
            buf[p3 + j] = y1r - u3r;
            buf[p3 + j + 1] = y1i - u3i;
          }
        }
      }
    }
  }

  private transpose(buf: Float64Array): void {
    const n = this.n;
    for (let r = 0; r < n; r++)
      for (let c = r + 1; c < n; c++) {
        const a = 2 * (c + r * n);
        const b = 2 * (r + c * n);
        const re = buf[a]!;
        const im = buf[a + 1]!;
        buf[a] = buf[b]!;
        buf[a + 1] = buf[b + 1]!;
        buf[b] = re;
        buf[b + 1] = im;
      }
  }
}
