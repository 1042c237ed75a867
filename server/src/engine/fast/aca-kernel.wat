;; The residual updates of adaptive cross approximation (aca.ts) in WebAssembly with 128-bit SIMD:
;;   y[b] −= Σ_{l<k} c_l · A_l[b]  (b < len), term by term in order of l, skipping c_l = 0,
;; the same operations in the same order as the JavaScript loop, so the same numbers to the bit.
;; A pivot row's update is y = the row, A_l = V's rows, c_l = U[l][i]; a pivot column's is y = the
;; column, A_l = U's columns, c_l = V[l][j]. Addresses and strides are in bytes.
(module
  (import "env" "memory" (memory 1))

  (func (export "residual") (param $y i32) (param $len i32) (param $a i32) (param $aStride i32)
      (param $c i32) (param $cStride i32) (param $k i32)
    (local $l i32) (local $cl f64) (local $cc v128) (local $p i32) (local $q i32) (local $end i32) (local $pairs i32)
    (local.set $pairs (i32.add (local.get $y) (i32.shl (i32.and (local.get $len) (i32.const -2)) (i32.const 3))))
    (local.set $end (i32.add (local.get $y) (i32.shl (local.get $len) (i32.const 3))))
    (block $done
      (loop $term
        (br_if $done (i32.ge_s (local.get $l) (local.get $k)))
        (local.set $cl (f64.load (local.get $c)))
        (if (f64.ne (local.get $cl) (f64.const 0))
          (then
            (local.set $cc (f64x2.splat (local.get $cl)))
            (local.set $p (local.get $y))
            (local.set $q (local.get $a))
            (block $pairsDone
              (loop $pair
                (br_if $pairsDone (i32.ge_u (local.get $p) (local.get $pairs)))
                (v128.store align=8 (local.get $p)
                  (f64x2.sub (v128.load align=8 (local.get $p)) (f64x2.mul (local.get $cc) (v128.load align=8 (local.get $q)))))
                (local.set $p (i32.add (local.get $p) (i32.const 16)))
                (local.set $q (i32.add (local.get $q) (i32.const 16)))
                (br $pair)))
            (if (i32.lt_u (local.get $p) (local.get $end))
              (then
                (f64.store (local.get $p)
                  (f64.sub (f64.load (local.get $p)) (f64.mul (local.get $cl) (f64.load (local.get $q)))))))))
        (local.set $a (i32.add (local.get $a) (local.get $aStride)))
        (local.set $c (i32.add (local.get $c) (local.get $cStride)))
        (local.set $l (i32.add (local.get $l) (i32.const 1)))
        (br $term))))
)
