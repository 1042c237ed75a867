;; The H-matrix product's inner loops in WebAssembly with 128-bit SIMD (hmatrix.ts packProduct
;; does the same in plain JavaScript, and is the reference the tests compare against). The
;; preconditioner's rows (block-jacobi.ts) use its dot product, dot1, too.
;;
;; Everything lives in one shared memory (arena.ts): the packed blocks (single precision) and the
;; vectors (double precision). Per block, 6 i32 at `heads` + 24·b: r0, m, c0, n, rank (−1 for a
;; dense block) and the offset (in floats) of its numbers after `values`: a dense block row-major
;; (m·n), a low-rank one U (rank columns of length m) then V (rank rows of length n).
;;   dense:    y[r0 + a] += Σ_k A[a][k] · x[c0 + k]
;;   low rank: y[r0 + a] += Σ_l U[l][a] · (Σ_k V[l][k] · x[c0 + k])
;; Stored numbers are widened to double (f64x2.promote_low_f32x4) and every sum is in double, two
;; lanes at a time; the lanes are added at the end of each dot product. Addresses are unsigned
;; bytes (the memory may reach 4 GiB).
(module
  (import "env" "memory" (memory 1 65536 shared))

  ;; Σ a[k]·x[k] for k < len (a: floats, x: doubles): eight at a time into four sums (so that the
  ;; additions do not wait on each other), then four at a time, then one.
  (func $dot1 (export "dot1") (param $a i32) (param $x i32) (param $len i32) (result f64)
    (local $end i32) (local $s0 v128) (local $s1 v128) (local $s2 v128) (local $s3 v128) (local $s f64)
    (local.set $end (i32.add (local.get $a) (i32.shl (i32.and (local.get $len) (i32.const -8)) (i32.const 2))))
    (block $out
      (loop $eight
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $s0 (f64x2.add (local.get $s0)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $a))) (v128.load align=8 (local.get $x)))))
        (local.set $s1 (f64x2.add (local.get $s1)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $a))) (v128.load offset=16 align=8 (local.get $x)))))
        (local.set $s2 (f64x2.add (local.get $s2)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero offset=16 align=4 (local.get $a))) (v128.load offset=32 align=8 (local.get $x)))))
        (local.set $s3 (f64x2.add (local.get $s3)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero offset=24 align=4 (local.get $a))) (v128.load offset=48 align=8 (local.get $x)))))
        (local.set $a (i32.add (local.get $a) (i32.const 32)))
        (local.set $x (i32.add (local.get $x) (i32.const 64)))
        (br $eight)))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 4)) (i32.const 2))))
    (if (i32.lt_u (local.get $a) (local.get $end))
      (then
        (local.set $s0 (f64x2.add (local.get $s0)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $a))) (v128.load align=8 (local.get $x)))))
        (local.set $s1 (f64x2.add (local.get $s1)
          (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $a))) (v128.load offset=16 align=8 (local.get $x)))))
        (local.set $a (i32.add (local.get $a) (i32.const 16)))
        (local.set $x (i32.add (local.get $x) (i32.const 32)))))
    (local.set $s0 (f64x2.add (f64x2.add (local.get $s0) (local.get $s1)) (f64x2.add (local.get $s2) (local.get $s3))))
    (local.set $s (f64.add (f64x2.extract_lane 0 (local.get $s0)) (f64x2.extract_lane 1 (local.get $s0))))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 3)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $s (f64.add (local.get $s)
          (f64.mul (f64.promote_f32 (f32.load (local.get $a))) (f64.load (local.get $x)))))
        (local.set $a (i32.add (local.get $a) (i32.const 4)))
        (local.set $x (i32.add (local.get $x) (i32.const 8)))
        (br $one)))
    (local.get $s))

  ;; Σ a[k]·x1[k] and Σ a[k]·x2[k] for k < len, in one pass over a (eight at a time into four sums
  ;; each, then one at a time).
  (func $dot2 (param $a i32) (param $x1 i32) (param $x2 i32) (param $len i32) (result f64 f64)
    (local $end i32) (local $p0 v128) (local $p1 v128) (local $p2 v128) (local $p3 v128)
    (local $s0 v128) (local $s1 v128) (local $s2 v128) (local $s3 v128)
    (local $t0 v128) (local $t1 v128) (local $t2 v128) (local $t3 v128) (local $s f64) (local $t f64) (local $e f64)
    (local.set $end (i32.add (local.get $a) (i32.shl (i32.and (local.get $len) (i32.const -8)) (i32.const 2))))
    (block $out
      (loop $eight
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $p0 (f64x2.promote_low_f32x4 (v128.load64_zero offset=0 align=4 (local.get $a))))
        (local.set $p1 (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $a))))
        (local.set $p2 (f64x2.promote_low_f32x4 (v128.load64_zero offset=16 align=4 (local.get $a))))
        (local.set $p3 (f64x2.promote_low_f32x4 (v128.load64_zero offset=24 align=4 (local.get $a))))
        (local.set $s0 (f64x2.add (local.get $s0) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x1)))))
        (local.set $t0 (f64x2.add (local.get $t0) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x2)))))
        (local.set $s1 (f64x2.add (local.get $s1) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x1)))))
        (local.set $t1 (f64x2.add (local.get $t1) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x2)))))
        (local.set $s2 (f64x2.add (local.get $s2) (f64x2.mul (local.get $p2) (v128.load offset=32 align=8 (local.get $x1)))))
        (local.set $t2 (f64x2.add (local.get $t2) (f64x2.mul (local.get $p2) (v128.load offset=32 align=8 (local.get $x2)))))
        (local.set $s3 (f64x2.add (local.get $s3) (f64x2.mul (local.get $p3) (v128.load offset=48 align=8 (local.get $x1)))))
        (local.set $t3 (f64x2.add (local.get $t3) (f64x2.mul (local.get $p3) (v128.load offset=48 align=8 (local.get $x2)))))
        (local.set $a (i32.add (local.get $a) (i32.const 32)))
        (local.set $x1 (i32.add (local.get $x1) (i32.const 64)))
        (local.set $x2 (i32.add (local.get $x2) (i32.const 64)))
        (br $eight)))
    (local.set $s0 (f64x2.add (f64x2.add (local.get $s0) (local.get $s1)) (f64x2.add (local.get $s2) (local.get $s3))))
    (local.set $t0 (f64x2.add (f64x2.add (local.get $t0) (local.get $t1)) (f64x2.add (local.get $t2) (local.get $t3))))
    (local.set $s (f64.add (f64x2.extract_lane 0 (local.get $s0)) (f64x2.extract_lane 1 (local.get $s0))))
    (local.set $t (f64.add (f64x2.extract_lane 0 (local.get $t0)) (f64x2.extract_lane 1 (local.get $t0))))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 7)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $e (f64.promote_f32 (f32.load (local.get $a))))
        (local.set $s (f64.add (local.get $s) (f64.mul (local.get $e) (f64.load (local.get $x1)))))
        (local.set $t (f64.add (local.get $t) (f64.mul (local.get $e) (f64.load (local.get $x2)))))
        (local.set $a (i32.add (local.get $a) (i32.const 4)))
        (local.set $x1 (i32.add (local.get $x1) (i32.const 8)))
        (local.set $x2 (i32.add (local.get $x2) (i32.const 8)))
        (br $one)))
    (local.get $s) (local.get $t))

  ;; y[a] += t·u[a] for a < len (u: floats, y: doubles), four at a time, then one.
  (func $axpy1 (param $u i32) (param $y i32) (param $len i32) (param $t f64)
    (local $end i32) (local $tt v128)
    (local.set $tt (f64x2.splat (local.get $t)))
    (local.set $end (i32.add (local.get $u) (i32.shl (i32.and (local.get $len) (i32.const -4)) (i32.const 2))))
    (block $out
      (loop $four
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (v128.store align=8 (local.get $y) (f64x2.add (v128.load align=8 (local.get $y))
          (f64x2.mul (local.get $tt) (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $u))))))
        (v128.store offset=16 align=8 (local.get $y) (f64x2.add (v128.load offset=16 align=8 (local.get $y))
          (f64x2.mul (local.get $tt) (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $u))))))
        (local.set $u (i32.add (local.get $u) (i32.const 16)))
        (local.set $y (i32.add (local.get $y) (i32.const 32)))
        (br $four)))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 3)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (f64.store (local.get $y) (f64.add (f64.load (local.get $y))
          (f64.mul (local.get $t) (f64.promote_f32 (f32.load (local.get $u))))))
        (local.set $u (i32.add (local.get $u) (i32.const 4)))
        (local.set $y (i32.add (local.get $y) (i32.const 8)))
        (br $one))))

  ;; y1[a] += t1·u[a] and y2[a] += t2·u[a] for a < len, in one pass over u.
  (func $axpy2 (param $u i32) (param $y1 i32) (param $y2 i32) (param $len i32) (param $t1 f64) (param $t2 f64)
    (local $end i32) (local $lo v128) (local $hi v128) (local $tt1 v128) (local $tt2 v128) (local $e f64)
    (local.set $tt1 (f64x2.splat (local.get $t1)))
    (local.set $tt2 (f64x2.splat (local.get $t2)))
    (local.set $end (i32.add (local.get $u) (i32.shl (i32.and (local.get $len) (i32.const -4)) (i32.const 2))))
    (block $out
      (loop $four
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (local.set $lo (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $u))))
        (local.set $hi (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $u))))
        (v128.store align=8 (local.get $y1) (f64x2.add (v128.load align=8 (local.get $y1)) (f64x2.mul (local.get $tt1) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y1) (f64x2.add (v128.load offset=16 align=8 (local.get $y1)) (f64x2.mul (local.get $tt1) (local.get $hi))))
        (v128.store align=8 (local.get $y2) (f64x2.add (v128.load align=8 (local.get $y2)) (f64x2.mul (local.get $tt2) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y2) (f64x2.add (v128.load offset=16 align=8 (local.get $y2)) (f64x2.mul (local.get $tt2) (local.get $hi))))
        (local.set $u (i32.add (local.get $u) (i32.const 16)))
        (local.set $y1 (i32.add (local.get $y1) (i32.const 32)))
        (local.set $y2 (i32.add (local.get $y2) (i32.const 32)))
        (br $four)))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 3)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (local.set $e (f64.promote_f32 (f32.load (local.get $u))))
        (f64.store (local.get $y1) (f64.add (f64.load (local.get $y1)) (f64.mul (local.get $t1) (local.get $e))))
        (f64.store (local.get $y2) (f64.add (f64.load (local.get $y2)) (f64.mul (local.get $t2) (local.get $e))))
        (local.set $u (i32.add (local.get $u) (i32.const 4)))
        (local.set $y1 (i32.add (local.get $y1) (i32.const 8)))
        (local.set $y2 (i32.add (local.get $y2) (i32.const 8)))
        (br $one))))

  ;; Σ a[k]·x_v[k] for four vectors v and k < len, in one pass over a (four at a time into two
  ;; sums per vector, then one at a time).
  (func $dot4 (param $a i32) (param $x0 i32) (param $x1 i32) (param $x2 i32) (param $x3 i32) (param $len i32) (result f64 f64 f64 f64)
    (local $end i32) (local $p0 v128) (local $p1 v128) (local $s00 v128) (local $s01 v128) (local $s10 v128) (local $s11 v128) (local $s20 v128) (local $s21 v128) (local $s30 v128) (local $s31 v128)
    (local $t0 f64) (local $t1 f64) (local $t2 f64) (local $t3 f64) (local $e f64)
    (local.set $end (i32.add (local.get $a) (i32.shl (i32.and (local.get $len) (i32.const -4)) (i32.const 2))))
    (block $out
      (loop $four
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $p0 (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $a))))
        (local.set $p1 (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $a))))
        (local.set $s00 (f64x2.add (local.get $s00) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x0)))))
        (local.set $s01 (f64x2.add (local.get $s01) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x0)))))
        (local.set $s10 (f64x2.add (local.get $s10) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x1)))))
        (local.set $s11 (f64x2.add (local.get $s11) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x1)))))
        (local.set $s20 (f64x2.add (local.get $s20) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x2)))))
        (local.set $s21 (f64x2.add (local.get $s21) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x2)))))
        (local.set $s30 (f64x2.add (local.get $s30) (f64x2.mul (local.get $p0) (v128.load offset=0 align=8 (local.get $x3)))))
        (local.set $s31 (f64x2.add (local.get $s31) (f64x2.mul (local.get $p1) (v128.load offset=16 align=8 (local.get $x3)))))
        (local.set $a (i32.add (local.get $a) (i32.const 16)))
        (local.set $x0 (i32.add (local.get $x0) (i32.const 32)))
        (local.set $x1 (i32.add (local.get $x1) (i32.const 32)))
        (local.set $x2 (i32.add (local.get $x2) (i32.const 32)))
        (local.set $x3 (i32.add (local.get $x3) (i32.const 32)))
        (br $four)))
    (local.set $s00 (f64x2.add (local.get $s00) (local.get $s01)))
    (local.set $t0 (f64.add (f64x2.extract_lane 0 (local.get $s00)) (f64x2.extract_lane 1 (local.get $s00))))
    (local.set $s10 (f64x2.add (local.get $s10) (local.get $s11)))
    (local.set $t1 (f64.add (f64x2.extract_lane 0 (local.get $s10)) (f64x2.extract_lane 1 (local.get $s10))))
    (local.set $s20 (f64x2.add (local.get $s20) (local.get $s21)))
    (local.set $t2 (f64.add (f64x2.extract_lane 0 (local.get $s20)) (f64x2.extract_lane 1 (local.get $s20))))
    (local.set $s30 (f64x2.add (local.get $s30) (local.get $s31)))
    (local.set $t3 (f64.add (f64x2.extract_lane 0 (local.get $s30)) (f64x2.extract_lane 1 (local.get $s30))))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 3)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $a) (local.get $end)))
        (local.set $e (f64.promote_f32 (f32.load (local.get $a))))
        (local.set $t0 (f64.add (local.get $t0) (f64.mul (local.get $e) (f64.load (local.get $x0)))))
        (local.set $t1 (f64.add (local.get $t1) (f64.mul (local.get $e) (f64.load (local.get $x1)))))
        (local.set $t2 (f64.add (local.get $t2) (f64.mul (local.get $e) (f64.load (local.get $x2)))))
        (local.set $t3 (f64.add (local.get $t3) (f64.mul (local.get $e) (f64.load (local.get $x3)))))
        (local.set $a (i32.add (local.get $a) (i32.const 4)))
        (local.set $x0 (i32.add (local.get $x0) (i32.const 8)))
        (local.set $x1 (i32.add (local.get $x1) (i32.const 8)))
        (local.set $x2 (i32.add (local.get $x2) (i32.const 8)))
        (local.set $x3 (i32.add (local.get $x3) (i32.const 8)))
        (br $one)))
    (local.get $t0) (local.get $t1) (local.get $t2) (local.get $t3))

  ;; y_v[a] += t_v·u[a] for four vectors v and a < len, in one pass over u.
  (func $axpy4 (param $u i32) (param $y0 i32) (param $y1 i32) (param $y2 i32) (param $y3 i32) (param $len i32)
      (param $t0 f64) (param $t1 f64) (param $t2 f64) (param $t3 f64)
    (local $end i32) (local $lo v128) (local $hi v128) (local $tt0 v128) (local $tt1 v128) (local $tt2 v128) (local $tt3 v128) (local $e f64)
    (local.set $tt0 (f64x2.splat (local.get $t0)))
    (local.set $tt1 (f64x2.splat (local.get $t1)))
    (local.set $tt2 (f64x2.splat (local.get $t2)))
    (local.set $tt3 (f64x2.splat (local.get $t3)))
    (local.set $end (i32.add (local.get $u) (i32.shl (i32.and (local.get $len) (i32.const -4)) (i32.const 2))))
    (block $out
      (loop $four
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (local.set $lo (f64x2.promote_low_f32x4 (v128.load64_zero align=4 (local.get $u))))
        (local.set $hi (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 align=4 (local.get $u))))
        (v128.store align=8 (local.get $y0) (f64x2.add (v128.load align=8 (local.get $y0)) (f64x2.mul (local.get $tt0) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y0) (f64x2.add (v128.load offset=16 align=8 (local.get $y0)) (f64x2.mul (local.get $tt0) (local.get $hi))))
        (v128.store align=8 (local.get $y1) (f64x2.add (v128.load align=8 (local.get $y1)) (f64x2.mul (local.get $tt1) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y1) (f64x2.add (v128.load offset=16 align=8 (local.get $y1)) (f64x2.mul (local.get $tt1) (local.get $hi))))
        (v128.store align=8 (local.get $y2) (f64x2.add (v128.load align=8 (local.get $y2)) (f64x2.mul (local.get $tt2) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y2) (f64x2.add (v128.load offset=16 align=8 (local.get $y2)) (f64x2.mul (local.get $tt2) (local.get $hi))))
        (v128.store align=8 (local.get $y3) (f64x2.add (v128.load align=8 (local.get $y3)) (f64x2.mul (local.get $tt3) (local.get $lo))))
        (v128.store offset=16 align=8 (local.get $y3) (f64x2.add (v128.load offset=16 align=8 (local.get $y3)) (f64x2.mul (local.get $tt3) (local.get $hi))))
        (local.set $u (i32.add (local.get $u) (i32.const 16)))
        (local.set $y0 (i32.add (local.get $y0) (i32.const 32)))
        (local.set $y1 (i32.add (local.get $y1) (i32.const 32)))
        (local.set $y2 (i32.add (local.get $y2) (i32.const 32)))
        (local.set $y3 (i32.add (local.get $y3) (i32.const 32)))
        (br $four)))
    (local.set $end (i32.add (local.get $end) (i32.shl (i32.and (local.get $len) (i32.const 3)) (i32.const 2))))
    (block $out
      (loop $one
        (br_if $out (i32.ge_u (local.get $u) (local.get $end)))
        (local.set $e (f64.promote_f32 (f32.load (local.get $u))))
        (f64.store (local.get $y0) (f64.add (f64.load (local.get $y0)) (f64.mul (local.get $t0) (local.get $e))))
        (f64.store (local.get $y1) (f64.add (f64.load (local.get $y1)) (f64.mul (local.get $t1) (local.get $e))))
        (f64.store (local.get $y2) (f64.add (f64.load (local.get $y2)) (f64.mul (local.get $t2) (local.get $e))))
        (f64.store (local.get $y3) (f64.add (f64.load (local.get $y3)) (f64.mul (local.get $t3) (local.get $e))))
        (local.set $u (i32.add (local.get $u) (i32.const 4)))
        (local.set $y0 (i32.add (local.get $y0) (i32.const 8)))
        (local.set $y1 (i32.add (local.get $y1) (i32.const 8)))
        (local.set $y2 (i32.add (local.get $y2) (i32.const 8)))
        (local.set $y3 (i32.add (local.get $y3) (i32.const 8)))
        (br $one))))

  ;; y += A·x over blocks [b0, b1) of one pack, for one vector.
  (func (export "blocks1") (param $heads i32) (param $b0 i32) (param $b1 i32) (param $values i32) (param $x i32) (param $y i32)
    (local $h i32) (local $m i32) (local $nc i32) (local $rank i32) (local $xc i32) (local $yr i32)
    (local $row i32) (local $a i32) (local $l i32) (local $v i32)
    (block $blocksDone
      (loop $block
        (br_if $blocksDone (i32.ge_s (local.get $b0) (local.get $b1)))
        (local.set $h (i32.add (local.get $heads) (i32.mul (local.get $b0) (i32.const 24))))
        (local.set $yr (i32.add (local.get $y) (i32.shl (i32.load (local.get $h)) (i32.const 3))))
        (local.set $m (i32.load offset=4 (local.get $h)))
        (local.set $xc (i32.add (local.get $x) (i32.shl (i32.load offset=8 (local.get $h)) (i32.const 3))))
        (local.set $nc (i32.load offset=12 (local.get $h)))
        (local.set $rank (i32.load offset=16 (local.get $h)))
        (local.set $row (i32.add (local.get $values) (i32.shl (i32.load offset=20 (local.get $h)) (i32.const 2))))
        (if (i32.lt_s (local.get $rank) (i32.const 0))
          (then
            (local.set $a (i32.const 0))
            (block $rowsDone
              (loop $rows
                (br_if $rowsDone (i32.ge_s (local.get $a) (local.get $m)))
                (f64.store (local.get $yr) (f64.add (f64.load (local.get $yr)) (call $dot1 (local.get $row) (local.get $xc) (local.get $nc))))
                (local.set $yr (i32.add (local.get $yr) (i32.const 8)))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $a (i32.add (local.get $a) (i32.const 1)))
                (br $rows))))
          (else
            ;; $row walks U's columns, $v V's rows.
            (local.set $v (i32.add (local.get $row) (i32.shl (i32.mul (local.get $rank) (local.get $m)) (i32.const 2))))
            (local.set $l (i32.const 0))
            (block $termsDone
              (loop $terms
                (br_if $termsDone (i32.ge_s (local.get $l) (local.get $rank)))
                (call $axpy1 (local.get $row) (local.get $yr) (local.get $m) (call $dot1 (local.get $v) (local.get $xc) (local.get $nc)))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $m) (i32.const 2))))
                (local.set $v (i32.add (local.get $v) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $l (i32.add (local.get $l) (i32.const 1)))
                (br $terms)))))
        (local.set $b0 (i32.add (local.get $b0) (i32.const 1)))
        (br $block))))

  ;; y1 += A·x1 and y2 += A·x2 over blocks [b0, b1) of one pack, in one pass over the stored numbers.
  (func (export "blocks2") (param $heads i32) (param $b0 i32) (param $b1 i32) (param $values i32)
      (param $x1 i32) (param $y1 i32) (param $x2 i32) (param $y2 i32)
    (local $h i32) (local $m i32) (local $nc i32) (local $rank i32) (local $c i32) (local $r i32)
    (local $row i32) (local $a i32) (local $l i32) (local $v i32) (local $s f64) (local $t f64)
    (block $blocksDone
      (loop $block
        (br_if $blocksDone (i32.ge_s (local.get $b0) (local.get $b1)))
        (local.set $h (i32.add (local.get $heads) (i32.mul (local.get $b0) (i32.const 24))))
        ;; $r and $c: byte offsets of the block's first row and column in every vector.
        (local.set $r (i32.shl (i32.load (local.get $h)) (i32.const 3)))
        (local.set $m (i32.load offset=4 (local.get $h)))
        (local.set $c (i32.shl (i32.load offset=8 (local.get $h)) (i32.const 3)))
        (local.set $nc (i32.load offset=12 (local.get $h)))
        (local.set $rank (i32.load offset=16 (local.get $h)))
        (local.set $row (i32.add (local.get $values) (i32.shl (i32.load offset=20 (local.get $h)) (i32.const 2))))
        (if (i32.lt_s (local.get $rank) (i32.const 0))
          (then
            (local.set $a (i32.const 0))
            (block $rowsDone
              (loop $rows
                (br_if $rowsDone (i32.ge_s (local.get $a) (local.get $m)))
                (call $dot2 (local.get $row) (i32.add (local.get $x1) (local.get $c)) (i32.add (local.get $x2) (local.get $c)) (local.get $nc))
                (local.set $t)
                (local.set $s)
                (f64.store (i32.add (local.get $y1) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y1) (local.get $r))) (local.get $s)))
                (f64.store (i32.add (local.get $y2) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y2) (local.get $r))) (local.get $t)))
                (local.set $r (i32.add (local.get $r) (i32.const 8)))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $a (i32.add (local.get $a) (i32.const 1)))
                (br $rows))))
          (else
            (local.set $v (i32.add (local.get $row) (i32.shl (i32.mul (local.get $rank) (local.get $m)) (i32.const 2))))
            (local.set $l (i32.const 0))
            (block $termsDone
              (loop $terms
                (br_if $termsDone (i32.ge_s (local.get $l) (local.get $rank)))
                (call $dot2 (local.get $v) (i32.add (local.get $x1) (local.get $c)) (i32.add (local.get $x2) (local.get $c)) (local.get $nc))
                (local.set $t)
                (local.set $s)
                (call $axpy2 (local.get $row) (i32.add (local.get $y1) (local.get $r)) (i32.add (local.get $y2) (local.get $r)) (local.get $m) (local.get $s) (local.get $t))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $m) (i32.const 2))))
                (local.set $v (i32.add (local.get $v) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $l (i32.add (local.get $l) (i32.const 1)))
                (br $terms)))))
        (local.set $b0 (i32.add (local.get $b0) (i32.const 1)))
        (br $block))))

  ;; y_v += A·x_v for four vectors over blocks [b0, b1) of one pack, in one pass over the stored numbers.
  (func (export "blocks4") (param $heads i32) (param $b0 i32) (param $b1 i32) (param $values i32)
      (param $x0 i32) (param $y0 i32) (param $x1 i32) (param $y1 i32) (param $x2 i32) (param $y2 i32) (param $x3 i32) (param $y3 i32)
    (local $h i32) (local $m i32) (local $nc i32) (local $rank i32) (local $c i32) (local $r i32)
    (local $row i32) (local $a i32) (local $l i32) (local $v i32) (local $d0 f64) (local $d1 f64) (local $d2 f64) (local $d3 f64)
    (block $blocksDone
      (loop $block
        (br_if $blocksDone (i32.ge_s (local.get $b0) (local.get $b1)))
        (local.set $h (i32.add (local.get $heads) (i32.mul (local.get $b0) (i32.const 24))))
        (local.set $r (i32.shl (i32.load (local.get $h)) (i32.const 3)))
        (local.set $m (i32.load offset=4 (local.get $h)))
        (local.set $c (i32.shl (i32.load offset=8 (local.get $h)) (i32.const 3)))
        (local.set $nc (i32.load offset=12 (local.get $h)))
        (local.set $rank (i32.load offset=16 (local.get $h)))
        (local.set $row (i32.add (local.get $values) (i32.shl (i32.load offset=20 (local.get $h)) (i32.const 2))))
        (if (i32.lt_s (local.get $rank) (i32.const 0))
          (then
            (local.set $a (i32.const 0))
            (block $rowsDone
              (loop $rows
                (br_if $rowsDone (i32.ge_s (local.get $a) (local.get $m)))
                (call $dot4 (local.get $row) (i32.add (local.get $x0) (local.get $c)) (i32.add (local.get $x1) (local.get $c)) (i32.add (local.get $x2) (local.get $c)) (i32.add (local.get $x3) (local.get $c)) (local.get $nc))
                (local.set $d3)
                (local.set $d2)
                (local.set $d1)
                (local.set $d0)
                (f64.store (i32.add (local.get $y0) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y0) (local.get $r))) (local.get $d0)))
                (f64.store (i32.add (local.get $y1) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y1) (local.get $r))) (local.get $d1)))
                (f64.store (i32.add (local.get $y2) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y2) (local.get $r))) (local.get $d2)))
                (f64.store (i32.add (local.get $y3) (local.get $r)) (f64.add (f64.load (i32.add (local.get $y3) (local.get $r))) (local.get $d3)))
                (local.set $r (i32.add (local.get $r) (i32.const 8)))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $a (i32.add (local.get $a) (i32.const 1)))
                (br $rows))))
          (else
            (local.set $v (i32.add (local.get $row) (i32.shl (i32.mul (local.get $rank) (local.get $m)) (i32.const 2))))
            (local.set $l (i32.const 0))
            (block $termsDone
              (loop $terms
                (br_if $termsDone (i32.ge_s (local.get $l) (local.get $rank)))
                (call $dot4 (local.get $v) (i32.add (local.get $x0) (local.get $c)) (i32.add (local.get $x1) (local.get $c)) (i32.add (local.get $x2) (local.get $c)) (i32.add (local.get $x3) (local.get $c)) (local.get $nc))
                (local.set $d3)
                (local.set $d2)
                (local.set $d1)
                (local.set $d0)
                (call $axpy4 (local.get $row) (i32.add (local.get $y0) (local.get $r)) (i32.add (local.get $y1) (local.get $r)) (i32.add (local.get $y2) (local.get $r)) (i32.add (local.get $y3) (local.get $r)) (local.get $m) (local.get $d0) (local.get $d1) (local.get $d2) (local.get $d3))
                (local.set $row (i32.add (local.get $row) (i32.shl (local.get $m) (i32.const 2))))
                (local.set $v (i32.add (local.get $v) (i32.shl (local.get $nc) (i32.const 2))))
                (local.set $l (i32.add (local.get $l) (i32.const 1)))
                (br $terms)))))
        (local.set $b0 (i32.add (local.get $b0) (i32.const 1)))
        (br $block))))
)
