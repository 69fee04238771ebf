;; rhofield: WebAssembly SIMD (128-bit) kernels of the displacement engine.
;;
;; Source of packages/core/src/correlate/kernels.wasm, built by `pnpm build:wasm`
;; (scripts/build-wasm.mjs, wabt's wat2wasm); tests/correlate/simdKernels.test.ts checks that the
;; committed binary is this text, built, and that every kernel agrees with the plain TypeScript one.
;;
;; All addresses are byte offsets into the module's own memory; the caller (simdKernels.ts) copies
;; image rows in and results out. Arithmetic is single precision (f32x4) except positions, which stay
;; double precision as in the TypeScript kernels.
(module
  (memory (export "memory") 4)

  ;; Lanczos-4 deformation of one image row (see lanczos.ts, lanczos4Row):
  ;; out[x] = Σⱼ Σᵢ T[qy][j]·T[qx][i]·src(ix − 3 + i, iy − 3 + j) at (px, py) = (x + s·hx[x], y + s·hy[x]),
  ;; for x = 0 … width − 1, with T the table of 4097 × 8 normalised weights (f32) at byte offset $tab and
  ;; q the fractional position in 1/4096 px (rounded). $src holds image rows $srcY0 … (width f32 each);
  ;; the caller makes sure they cover every row the kernel reaches. Positions outside
  ;; 3 ≤ px < width − 4, 3 ≤ py < height − 4 get NaN; the result is their count, and their x are
  ;; listed (i32) at $list (the caller evaluates them with the border rules of sampleLanczos4).
  ;; hx, hy: f32 per pixel.
  (func (export "lanczos4_row")
    (param $tab i32) (param $src i32) (param $srcY0 i32) (param $width i32) (param $height i32)
    (param $y i32) (param $hx i32) (param $hy i32) (param $s f64) (param $out i32) (param $list i32) (result i32)
    (local $x i32) (local $px f64) (local $py f64) (local $ix i32) (local $iy i32)
    (local $tx i32) (local $ty i32) (local $p i32) (local $stride i32) (local $bad i32)
    (local $lo v128) (local $hi v128) (local $w v128) (local $v v128)
    (local $xmax f64) (local $ymax f64) (local $yf f64)
    (local.set $stride (i32.shl (local.get $width) (i32.const 2)))
    (local.set $xmax (f64.convert_i32_s (i32.sub (local.get $width) (i32.const 4))))
    (local.set $ymax (f64.convert_i32_s (i32.sub (local.get $height) (i32.const 4))))
    (local.set $yf (f64.convert_i32_s (local.get $y)))
    (block $done
      (br_if $done (i32.le_s (local.get $width) (i32.const 0)))
      (loop $next
        (local.set $px (f64.add (f64.convert_i32_s (local.get $x)) (f64.mul (local.get $s) (f64.promote_f32 (f32.load (local.get $hx))))))
        (local.set $py (f64.add (local.get $yf) (f64.mul (local.get $s) (f64.promote_f32 (f32.load (local.get $hy))))))
        (if (i32.and
              (i32.and (f64.ge (local.get $px) (f64.const 3)) (f64.lt (local.get $px) (local.get $xmax)))
              (i32.and (f64.ge (local.get $py) (f64.const 3)) (f64.lt (local.get $py) (local.get $ymax))))
          (then
            (local.set $ix (i32.trunc_f64_s (local.get $px)))
            (local.set $iy (i32.trunc_f64_s (local.get $py)))
            (local.set $tx (i32.add (local.get $tab) (i32.shl (i32.trunc_f64_s (f64.add (f64.mul
              (f64.sub (local.get $px) (f64.convert_i32_s (local.get $ix))) (f64.const 4096)) (f64.const 0.5))) (i32.const 5))))
            (local.set $ty (i32.add (local.get $tab) (i32.shl (i32.trunc_f64_s (f64.add (f64.mul
              (f64.sub (local.get $py) (f64.convert_i32_s (local.get $iy))) (f64.const 4096)) (f64.const 0.5))) (i32.const 5))))
            (local.set $p (i32.add (local.get $src) (i32.shl (i32.add
              (i32.mul (i32.sub (local.get $iy) (i32.add (local.get $srcY0) (i32.const 3))) (local.get $width))
              (i32.sub (local.get $ix) (i32.const 3))) (i32.const 2))))
            ;; the 8 rows weighted by their y weights, 8 columns as two f32x4 halves
            (local.set $w (f32x4.splat (f32.load (local.get $ty))))
            (local.set $lo (f32x4.mul (v128.load (local.get $p)) (local.get $w)))
            (local.set $hi (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w)))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=4 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=8 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=12 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=16 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=20 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=24 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $w (f32x4.splat (f32.load offset=28 (local.get $ty))))
            (local.set $lo (f32x4.add (local.get $lo) (f32x4.mul (v128.load (local.get $p)) (local.get $w))))
            (local.set $hi (f32x4.add (local.get $hi) (f32x4.mul (v128.load offset=16 (local.get $p)) (local.get $w))))
            ;; then the x weights and the sum of the 8 columns
            (local.set $v (f32x4.add
              (f32x4.mul (local.get $lo) (v128.load (local.get $tx)))
              (f32x4.mul (local.get $hi) (v128.load offset=16 (local.get $tx)))))
            (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
            (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
            (f32.store (local.get $out) (f32x4.extract_lane 0 (local.get $v))))
          (else
            (f32.store (local.get $out) (f32.const nan))
            (i32.store (i32.add (local.get $list) (i32.shl (local.get $bad) (i32.const 2))) (local.get $x))
            (local.set $bad (i32.add (local.get $bad) (i32.const 1)))))
        (local.set $hx (i32.add (local.get $hx) (i32.const 4)))
        (local.set $hy (i32.add (local.get $hy) (i32.const 4)))
        (local.set $out (i32.add (local.get $out) (i32.const 4)))
        (local.set $x (i32.add (local.get $x) (i32.const 1)))
        (br_if $next (i32.lt_s (local.get $x) (local.get $width)))))
    (local.get $bad))

  ;; Keys cubic convolution (a = −½) deformation of one image row (see keysCubic.ts, keysRow); same
  ;; arguments as lanczos4_row without the table; NaN (counted) outside 1 ≤ px < width − 2,
  ;; 1 ≤ py < height − 2. Weights of t = px − ⌊px⌋: ½·(c₃t³ + c₂t² + c₁t + c₀) with
  ;; c₃ = (−1, 3, −3, 1), c₂ = (2, −5, 4, −1), c₁ = (−1, 0, 1, 0), c₀ = (0, 2, 0, 0) (the ½ folded in).
  (func (export "keys_row")
    (param $src i32) (param $srcY0 i32) (param $width i32) (param $height i32)
    (param $y i32) (param $hx i32) (param $hy i32) (param $s f64) (param $out i32) (param $list i32) (result i32)
    (local $x i32) (local $px f64) (local $py f64) (local $ix i32) (local $iy i32)
    (local $p i32) (local $stride i32) (local $bad i32)
    (local $t v128) (local $t2 v128) (local $wx v128) (local $wy v128) (local $acc v128) (local $v v128)
    (local $xmax f64) (local $ymax f64) (local $yf f64)
    (local.set $stride (i32.shl (local.get $width) (i32.const 2)))
    (local.set $xmax (f64.convert_i32_s (i32.sub (local.get $width) (i32.const 2))))
    (local.set $ymax (f64.convert_i32_s (i32.sub (local.get $height) (i32.const 2))))
    (local.set $yf (f64.convert_i32_s (local.get $y)))
    (block $done
      (br_if $done (i32.le_s (local.get $width) (i32.const 0)))
      (loop $next
        (local.set $px (f64.add (f64.convert_i32_s (local.get $x)) (f64.mul (local.get $s) (f64.promote_f32 (f32.load (local.get $hx))))))
        (local.set $py (f64.add (local.get $yf) (f64.mul (local.get $s) (f64.promote_f32 (f32.load (local.get $hy))))))
        (if (i32.and
              (i32.and (f64.ge (local.get $px) (f64.const 1)) (f64.lt (local.get $px) (local.get $xmax)))
              (i32.and (f64.ge (local.get $py) (f64.const 1)) (f64.lt (local.get $py) (local.get $ymax))))
          (then
            (local.set $ix (i32.trunc_f64_s (local.get $px)))
            (local.set $iy (i32.trunc_f64_s (local.get $py)))
            (local.set $t (f32x4.splat (f32.demote_f64 (f64.sub (local.get $px) (f64.convert_i32_s (local.get $ix))))))
            (local.set $t2 (f32x4.mul (local.get $t) (local.get $t)))
            (local.set $wx (f32x4.add
              (f32x4.add
                (f32x4.mul (v128.const f32x4 -0.5 1.5 -1.5 0.5) (f32x4.mul (local.get $t2) (local.get $t)))
                (f32x4.mul (v128.const f32x4 1 -2.5 2 -0.5) (local.get $t2)))
              (f32x4.add
                (f32x4.mul (v128.const f32x4 -0.5 0 0.5 0) (local.get $t))
                (v128.const f32x4 0 1 0 0))))
            (local.set $t (f32x4.splat (f32.demote_f64 (f64.sub (local.get $py) (f64.convert_i32_s (local.get $iy))))))
            (local.set $t2 (f32x4.mul (local.get $t) (local.get $t)))
            (local.set $wy (f32x4.add
              (f32x4.add
                (f32x4.mul (v128.const f32x4 -0.5 1.5 -1.5 0.5) (f32x4.mul (local.get $t2) (local.get $t)))
                (f32x4.mul (v128.const f32x4 1 -2.5 2 -0.5) (local.get $t2)))
              (f32x4.add
                (f32x4.mul (v128.const f32x4 -0.5 0 0.5 0) (local.get $t))
                (v128.const f32x4 0 1 0 0))))
            (local.set $p (i32.add (local.get $src) (i32.shl (i32.add
              (i32.mul (i32.sub (local.get $iy) (i32.add (local.get $srcY0) (i32.const 1))) (local.get $width))
              (i32.sub (local.get $ix) (i32.const 1))) (i32.const 2))))
            (local.set $acc (v128.const i32x4 0 0 0 0))
            (local.set $acc (f32x4.add (local.get $acc) (f32x4.mul (v128.load (local.get $p)) (i8x16.shuffle 0 1 2 3 0 1 2 3 0 1 2 3 0 1 2 3 (local.get $wy) (local.get $wy)))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $acc (f32x4.add (local.get $acc) (f32x4.mul (v128.load (local.get $p)) (i8x16.shuffle 4 5 6 7 4 5 6 7 4 5 6 7 4 5 6 7 (local.get $wy) (local.get $wy)))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $acc (f32x4.add (local.get $acc) (f32x4.mul (v128.load (local.get $p)) (i8x16.shuffle 8 9 10 11 8 9 10 11 8 9 10 11 8 9 10 11 (local.get $wy) (local.get $wy)))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $acc (f32x4.add (local.get $acc) (f32x4.mul (v128.load (local.get $p)) (i8x16.shuffle 12 13 14 15 12 13 14 15 12 13 14 15 12 13 14 15 (local.get $wy) (local.get $wy)))))
            (local.set $p (i32.add (local.get $p) (local.get $stride)))
            (local.set $v (f32x4.mul (local.get $acc) (local.get $wx)))
            (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
            (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
            (f32.store (local.get $out) (f32x4.extract_lane 0 (local.get $v))))
          (else
            (f32.store (local.get $out) (f32.const nan))
            (i32.store (i32.add (local.get $list) (i32.shl (local.get $bad) (i32.const 2))) (local.get $x))
            (local.set $bad (i32.add (local.get $bad) (i32.const 1)))))
        (local.set $hx (i32.add (local.get $hx) (i32.const 4)))
        (local.set $hy (i32.add (local.get $hy) (i32.const 4)))
        (local.set $out (i32.add (local.get $out) (i32.const 4)))
        (local.set $x (i32.add (local.get $x) (i32.const 1)))
        (br_if $next (i32.lt_s (local.get $x) (local.get $width)))))
    (local.get $bad))

  ;; Lag-limited cross-correlation (see directCorrelator.ts): R(u, v) = Σ a(c, r)·b(c + u, r + v) for
  ;; u, v = 0 … 4, with a an n × n window (f32, rows of n) and b (f32) rows of $m4 bytes, so that
  ;; lag (u, v) = (0, 0) here is lag (−2, −2) of the windows when $b points 2 rows and 2 columns before
  ;; the measurement window inside its zero border; n a multiple of 4. Writes the 25 sums as f64 to
  ;; $out, row v at 5·v.
  (func $corr25 (param $a i32) (param $b i32) (param $n i32) (param $m4 i32) (param $out i32)
    (local $vv i32) (local $r i32) (local $c i32) (local $ap i32) (local $bp i32) (local $o i32)
    (local $s0 v128) (local $s1 v128) (local $s2 v128) (local $s3 v128) (local $s4 v128) (local $v v128)
    (local.set $o (local.get $out))
    (loop $lagRow
      (local.set $s0 (v128.const i32x4 0 0 0 0))
      (local.set $s1 (v128.const i32x4 0 0 0 0))
      (local.set $s2 (v128.const i32x4 0 0 0 0))
      (local.set $s3 (v128.const i32x4 0 0 0 0))
      (local.set $s4 (v128.const i32x4 0 0 0 0))
      (local.set $ap (local.get $a))
      (local.set $r (i32.const 0))
      (loop $row
        (local.set $bp (i32.add (local.get $b) (i32.mul (i32.add (local.get $r) (local.get $vv)) (local.get $m4))))
        (local.set $c (i32.const 0))
        (loop $col
          (local.set $v (v128.load (local.get $ap)))
              (local.set $s0 (f32x4.add (local.get $s0) (f32x4.mul (local.get $v) (v128.load offset=0 (local.get $bp)))))
              (local.set $s1 (f32x4.add (local.get $s1) (f32x4.mul (local.get $v) (v128.load offset=4 (local.get $bp)))))
              (local.set $s2 (f32x4.add (local.get $s2) (f32x4.mul (local.get $v) (v128.load offset=8 (local.get $bp)))))
              (local.set $s3 (f32x4.add (local.get $s3) (f32x4.mul (local.get $v) (v128.load offset=12 (local.get $bp)))))
              (local.set $s4 (f32x4.add (local.get $s4) (f32x4.mul (local.get $v) (v128.load offset=16 (local.get $bp)))))
          (local.set $ap (i32.add (local.get $ap) (i32.const 16)))
          (local.set $bp (i32.add (local.get $bp) (i32.const 16)))
          (local.set $c (i32.add (local.get $c) (i32.const 4)))
          (br_if $col (i32.lt_s (local.get $c) (local.get $n))))
        (local.set $r (i32.add (local.get $r) (i32.const 1)))
        (br_if $row (i32.lt_s (local.get $r) (local.get $n))))
        (local.set $v (local.get $s0))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
        (f64.store offset=0 (local.get $o) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
        (local.set $v (local.get $s1))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
        (f64.store offset=8 (local.get $o) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
        (local.set $v (local.get $s2))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
        (f64.store offset=16 (local.get $o) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
        (local.set $v (local.get $s3))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
        (f64.store offset=24 (local.get $o) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
        (local.set $v (local.get $s4))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
        (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
        (f64.store offset=32 (local.get $o) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
      (local.set $o (i32.add (local.get $o) (i32.const 40)))
      (local.set $vv (i32.add (local.get $vv) (i32.const 1)))
      (br_if $lagRow (i32.lt_s (local.get $vv) (i32.const 5)))))

  ;; Half the predictor of one image row, interpolated between four predictor rows (see engine.ts,
  ;; deformRows): hx[x] = ½·Σⱼ wⱼ·X_j[x], hy[x] = ½·Σⱼ wⱼ·Y_j[x] (f32), x = 0 … width − 1, for
  ;; rows X_j at $x0 … $x3 and Y_j at $x_j + $dy bytes. The smallest and largest hy are written to
  ;; $mm (f32 × 2; NaN when some hy is NaN).
  (func (export "half_pred")
    (param $x0 i32) (param $x1 i32) (param $x2 i32) (param $x3 i32) (param $dy i32)
    (param $w0 f32) (param $w1 f32) (param $w2 f32) (param $w3 f32)
    (param $width i32) (param $hx i32) (param $hy i32) (param $mm i32)
    (local $i i32) (local $end i32) (local $v0 v128) (local $v1 v128) (local $v2 v128) (local $v3 v128)
    (local $h v128) (local $lo v128) (local $hi v128) (local $f f32) (local $flo f32) (local $fhi f32)
    (local.set $v0 (f32x4.splat (f32.mul (f32.const 0.5) (local.get $w0))))
    (local.set $v1 (f32x4.splat (f32.mul (f32.const 0.5) (local.get $w1))))
    (local.set $v2 (f32x4.splat (f32.mul (f32.const 0.5) (local.get $w2))))
    (local.set $v3 (f32x4.splat (f32.mul (f32.const 0.5) (local.get $w3))))
    (local.set $lo (v128.const f32x4 inf inf inf inf))
    (local.set $hi (v128.const f32x4 -inf -inf -inf -inf))
    (local.set $end (i32.shl (i32.and (local.get $width) (i32.const -4)) (i32.const 2)))
    (block $done
      (br_if $done (i32.eqz (local.get $end)))
      (loop $next
        (v128.store (i32.add (local.get $hx) (local.get $i)) (f32x4.add
          (f32x4.add (f32x4.mul (local.get $v0) (v128.load (i32.add (local.get $x0) (local.get $i))))
                     (f32x4.mul (local.get $v1) (v128.load (i32.add (local.get $x1) (local.get $i)))))
          (f32x4.add (f32x4.mul (local.get $v2) (v128.load (i32.add (local.get $x2) (local.get $i))))
                     (f32x4.mul (local.get $v3) (v128.load (i32.add (local.get $x3) (local.get $i)))))))
        (local.set $h (f32x4.add
          (f32x4.add (f32x4.mul (local.get $v0) (v128.load (i32.add (i32.add (local.get $x0) (local.get $dy)) (local.get $i))))
                     (f32x4.mul (local.get $v1) (v128.load (i32.add (i32.add (local.get $x1) (local.get $dy)) (local.get $i)))))
          (f32x4.add (f32x4.mul (local.get $v2) (v128.load (i32.add (i32.add (local.get $x2) (local.get $dy)) (local.get $i))))
                     (f32x4.mul (local.get $v3) (v128.load (i32.add (i32.add (local.get $x3) (local.get $dy)) (local.get $i)))))))
        (v128.store (i32.add (local.get $hy) (local.get $i)) (local.get $h))
        (local.set $lo (f32x4.min (local.get $lo) (local.get $h)))
        (local.set $hi (f32x4.max (local.get $hi) (local.get $h)))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br_if $next (i32.lt_u (local.get $i) (local.get $end)))))
    (local.set $flo (f32.min (f32.min (f32x4.extract_lane 0 (local.get $lo)) (f32x4.extract_lane 1 (local.get $lo)))
                             (f32.min (f32x4.extract_lane 2 (local.get $lo)) (f32x4.extract_lane 3 (local.get $lo)))))
    (local.set $fhi (f32.max (f32.max (f32x4.extract_lane 0 (local.get $hi)) (f32x4.extract_lane 1 (local.get $hi)))
                             (f32.max (f32x4.extract_lane 2 (local.get $hi)) (f32x4.extract_lane 3 (local.get $hi)))))
    ;; the last width mod 4 pixels one by one
    (local.set $end (i32.shl (local.get $width) (i32.const 2)))
    (block $tailDone
      (br_if $tailDone (i32.ge_u (local.get $i) (local.get $end)))
      (loop $tail
        (f32.store (i32.add (local.get $hx) (local.get $i)) (f32.add
          (f32.add (f32.mul (f32x4.extract_lane 0 (local.get $v0)) (f32.load (i32.add (local.get $x0) (local.get $i))))
                   (f32.mul (f32x4.extract_lane 0 (local.get $v1)) (f32.load (i32.add (local.get $x1) (local.get $i)))))
          (f32.add (f32.mul (f32x4.extract_lane 0 (local.get $v2)) (f32.load (i32.add (local.get $x2) (local.get $i))))
                   (f32.mul (f32x4.extract_lane 0 (local.get $v3)) (f32.load (i32.add (local.get $x3) (local.get $i)))))))
        (local.set $f (f32.add
          (f32.add (f32.mul (f32x4.extract_lane 0 (local.get $v0)) (f32.load (i32.add (i32.add (local.get $x0) (local.get $dy)) (local.get $i))))
                   (f32.mul (f32x4.extract_lane 0 (local.get $v1)) (f32.load (i32.add (i32.add (local.get $x1) (local.get $dy)) (local.get $i)))))
          (f32.add (f32.mul (f32x4.extract_lane 0 (local.get $v2)) (f32.load (i32.add (i32.add (local.get $x2) (local.get $dy)) (local.get $i))))
                   (f32.mul (f32x4.extract_lane 0 (local.get $v3)) (f32.load (i32.add (i32.add (local.get $x3) (local.get $dy)) (local.get $i)))))))
        (f32.store (i32.add (local.get $hy) (local.get $i)) (local.get $f))
        (local.set $flo (f32.min (local.get $flo) (local.get $f)))
        (local.set $fhi (f32.max (local.get $fhi) (local.get $f)))
        (local.set $i (i32.add (local.get $i) (i32.const 4)))
        (br_if $tail (i32.lt_u (local.get $i) (local.get $end)))))
    (f32.store (local.get $mm) (local.get $flo))
    (f32.store offset=4 (local.get $mm) (local.get $fhi)))

  ;; One window pair of the lag-limited correlation, start to end (see directCorrelator.ts): the
  ;; n × n windows at $A and $B (row stride $stride f32) → sums and counts of their finite pixels,
  ;; mean-removed copies (NaN → 0) in $a (n × n) and inside the 3 px zero border of $b ((n + 6)²), their
  ;; energies Σa², Σb², and the 25 lag sums. Writes f64 to $out: sumA, sumB, countA, countB, energyA,
  ;; energyB, then R(u, v) as corr25 does. n a multiple of 4.
  (func (export "direct_window")
    (param $A i32) (param $B i32) (param $stride i32) (param $n i32) (param $a i32) (param $b i32) (param $out i32)
    (local $r i32) (local $i i32) (local $pa i32) (local $pb i32) (local $qa i32) (local $qb i32)
    (local $row i32) (local $m4 i32) (local $n4 i32)
    (local $sa v128) (local $sb v128) (local $ca v128) (local $cb v128) (local $va v128) (local $vb v128)
    (local $ka v128) (local $kb v128) (local $ma v128) (local $mb v128) (local $ea v128) (local $eb v128)
    (local $v v128) (local $c v128) (local $fa f32) (local $fb f32) (local $na i32) (local $nb i32)
    (local.set $row (i32.shl (local.get $stride) (i32.const 2)))
    (local.set $n4 (i32.shl (local.get $n) (i32.const 2)))
    (local.set $m4 (i32.add (local.get $n4) (i32.const 24)))
    ;; sums and counts (a lane of f32x4.eq(v, v) is all ones where v is not NaN)
    (local.set $pa (local.get $A))
    (local.set $pb (local.get $B))
    (local.set $r (i32.const 0))
    (loop $sumRows
      (local.set $i (i32.const 0))
      (loop $sumCols
        (local.set $va (v128.load (i32.add (local.get $pa) (local.get $i))))
        (local.set $vb (v128.load (i32.add (local.get $pb) (local.get $i))))
        (local.set $ka (f32x4.eq (local.get $va) (local.get $va)))
        (local.set $kb (f32x4.eq (local.get $vb) (local.get $vb)))
        (local.set $sa (f32x4.add (local.get $sa) (v128.and (local.get $va) (local.get $ka))))
        (local.set $sb (f32x4.add (local.get $sb) (v128.and (local.get $vb) (local.get $kb))))
        (local.set $ca (i32x4.sub (local.get $ca) (local.get $ka)))
        (local.set $cb (i32x4.sub (local.get $cb) (local.get $kb)))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br_if $sumCols (i32.lt_u (local.get $i) (local.get $n4))))
      (local.set $pa (i32.add (local.get $pa) (local.get $row)))
      (local.set $pb (i32.add (local.get $pb) (local.get $row)))
      (local.set $r (i32.add (local.get $r) (i32.const 1)))
      (br_if $sumRows (i32.lt_u (local.get $r) (local.get $n))))
    (local.set $v (local.get $sa))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
    (local.set $fa (f32x4.extract_lane 0 (local.get $v)))
    (local.set $v (local.get $sb))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
    (local.set $fb (f32x4.extract_lane 0 (local.get $v)))
    (local.set $c (local.get $ca))
    (local.set $c (i32x4.add (local.get $c) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $c) (local.get $c))))
    (local.set $c (i32x4.add (local.get $c) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $c) (local.get $c))))
    (local.set $na (i32x4.extract_lane 0 (local.get $c)))
    (local.set $c (local.get $cb))
    (local.set $c (i32x4.add (local.get $c) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $c) (local.get $c))))
    (local.set $c (i32x4.add (local.get $c) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $c) (local.get $c))))
    (local.set $nb (i32x4.extract_lane 0 (local.get $c)))
    (f64.store (local.get $out) (f64.promote_f32 (local.get $fa)))
    (f64.store offset=8 (local.get $out) (f64.promote_f32 (local.get $fb)))
    (f64.store offset=16 (local.get $out) (f64.convert_i32_s (local.get $na)))
    (f64.store offset=24 (local.get $out) (f64.convert_i32_s (local.get $nb)))
    (if (i32.or (i32.eqz (local.get $na)) (i32.eqz (local.get $nb))) (then (return)))
    (local.set $ma (f32x4.splat (f32.div (local.get $fa) (f32.convert_i32_s (local.get $na)))))
    (local.set $mb (f32x4.splat (f32.div (local.get $fb) (f32.convert_i32_s (local.get $nb)))))
    ;; mean-removed windows (NaN → 0) and energies
    (local.set $pa (local.get $A))
    (local.set $pb (local.get $B))
    (local.set $qa (local.get $a))
    (local.set $qb (i32.add (local.get $b) (i32.add (i32.mul (local.get $m4) (i32.const 3)) (i32.const 12))))
    (local.set $r (i32.const 0))
    (loop $prepRows
      (local.set $i (i32.const 0))
      (loop $prepCols
        (local.set $va (v128.load (i32.add (local.get $pa) (local.get $i))))
        (local.set $vb (v128.load (i32.add (local.get $pb) (local.get $i))))
        (local.set $va (v128.and (f32x4.sub (local.get $va) (local.get $ma)) (f32x4.eq (local.get $va) (local.get $va))))
        (local.set $vb (v128.and (f32x4.sub (local.get $vb) (local.get $mb)) (f32x4.eq (local.get $vb) (local.get $vb))))
        (v128.store (i32.add (local.get $qa) (local.get $i)) (local.get $va))
        (v128.store (i32.add (local.get $qb) (local.get $i)) (local.get $vb))
        (local.set $ea (f32x4.add (local.get $ea) (f32x4.mul (local.get $va) (local.get $va))))
        (local.set $eb (f32x4.add (local.get $eb) (f32x4.mul (local.get $vb) (local.get $vb))))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br_if $prepCols (i32.lt_u (local.get $i) (local.get $n4))))
      (local.set $pa (i32.add (local.get $pa) (local.get $row)))
      (local.set $pb (i32.add (local.get $pb) (local.get $row)))
      (local.set $qa (i32.add (local.get $qa) (local.get $n4)))
      (local.set $qb (i32.add (local.get $qb) (local.get $m4)))
      (local.set $r (i32.add (local.get $r) (i32.const 1)))
      (br_if $prepRows (i32.lt_u (local.get $r) (local.get $n))))
    (local.set $v (local.get $ea))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
    (f64.store offset=32 (local.get $out) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
    (local.set $v (local.get $eb))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 8 9 10 11 12 13 14 15 0 1 2 3 4 5 6 7 (local.get $v) (local.get $v))))
    (local.set $v (f32x4.add (local.get $v) (i8x16.shuffle 4 5 6 7 0 1 2 3 8 9 10 11 12 13 14 15 (local.get $v) (local.get $v))))
    (f64.store offset=40 (local.get $out) (f64.promote_f32 (f32x4.extract_lane 0 (local.get $v))))
    (call $corr25 (local.get $a) (i32.add (local.get $b) (i32.add (local.get $m4) (i32.const 4))) (local.get $n) (local.get $m4)
      (i32.add (local.get $out) (i32.const 48))))

  ;; The 25 lag sums again, centred on lag ($du, $dv) (each −1, 0 or 1) instead of 0, from the windows
  ;; direct_window left in $a and $b: R(du + u, dv + v), u, v = −2 … 2, as f64 to $out.
  (func (export "corr_shifted") (param $a i32) (param $b i32) (param $n i32) (param $du i32) (param $dv i32) (param $out i32)
    (local $m4 i32)
    (local.set $m4 (i32.shl (i32.add (local.get $n) (i32.const 6)) (i32.const 2)))
    (call $corr25 (local.get $a)
      (i32.add (local.get $b) (i32.add (i32.mul (local.get $m4) (i32.add (local.get $dv) (i32.const 1)))
                                       (i32.shl (i32.add (local.get $du) (i32.const 1)) (i32.const 2))))
      (local.get $n) (local.get $m4) (local.get $out)))
)
