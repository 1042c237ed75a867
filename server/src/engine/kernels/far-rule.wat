;; The far-field entries of the 3D panel matrix in WebAssembly: I_j(r) = ∫_Tj 1/|r − r'| dA' by the
;; 3-point and 4-point Gauss rules, exactly as kernels/triangle.ts computes them (the same points,
;; weights, switch distances and order of operations, so the numbers are the same to the bit). An
;; entry nearer than the 4-point rule's switch is written as NaN, for triangle.ts to compute (closed
;; form, 7- and 6-point rules): in the far blocks of the fast solver that is a few per cent.
;; The entry is written out in both loops (the engine here does not inline calls).
;;
;; Table (far-rule.ts), 272 bytes per panel: centroid x, y, z; the squared switch distances of the
;; 3- and 4-point rules; one unused; then the 3-point rule (x, y, z, weight) × 3 from byte 48 and
;; the 4-point rule × 4 from byte 144. Points: x, y, z per point, 24 bytes each.
(module
  (import "env" "memory" (memory 1))

  ;; out[k] = I over panel cols[k] at (x, y, z), k < n (cols: i32 panel numbers).
  (func (export "row") (param $x f64) (param $y f64) (param $z f64) (param $table i32) (param $cols i32) (param $n i32) (param $out i32)
    (local $end i32) (local $t i32) (local $dx f64) (local $dy f64) (local $dz f64) (local $d2 f64) (local $s f64) (local $v f64)
    (local.set $end (i32.add (local.get $cols) (i32.shl (local.get $n) (i32.const 2))))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $cols) (local.get $end)))
        (local.set $t (i32.add (local.get $table) (i32.mul (i32.load (local.get $cols)) (i32.const 272))))
        ;; $v ← I over the panel at table row $t, at ($x, $y, $z); NaN nearer than the 4-point switch.
        (local.set $dx (f64.sub (local.get $x) (f64.load (local.get $t))))
        (local.set $dy (f64.sub (local.get $y) (f64.load offset=8 (local.get $t))))
        (local.set $dz (f64.sub (local.get $z) (f64.load offset=16 (local.get $t))))
        (local.set $d2 (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))
        (local.set $v
          (if (result f64) (f64.gt (local.get $d2) (f64.load offset=24 (local.get $t)))
            (then
              (local.set $s (local.set $dx (f64.sub (local.get $x) (f64.load offset=48 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=56 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=64 (local.get $t))))
              (f64.div (f64.load offset=72 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=80 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=88 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=96 (local.get $t))))
              (f64.div (f64.load offset=104 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=112 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=120 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=128 (local.get $t))))
              (f64.div (f64.load offset=136 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.get $s))
            (else
              (if (result f64) (f64.gt (local.get $d2) (f64.load offset=32 (local.get $t)))
                (then
              (local.set $s (local.set $dx (f64.sub (local.get $x) (f64.load offset=144 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=152 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=160 (local.get $t))))
              (f64.div (f64.load offset=168 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=176 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=184 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=192 (local.get $t))))
              (f64.div (f64.load offset=200 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=208 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=216 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=224 (local.get $t))))
              (f64.div (f64.load offset=232 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=240 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=248 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=256 (local.get $t))))
              (f64.div (f64.load offset=264 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.get $s))
                (else (f64.const nan))))))
        (f64.store (local.get $out) (local.get $v))
        (local.set $cols (i32.add (local.get $cols) (i32.const 4)))
        (local.set $out (i32.add (local.get $out) (i32.const 8)))
        (br $next))))

  ;; out[k] = I over the panel at table row $t, at point rows[k] moved to flip·p + shift (an image), k < m.
  (func (export "col") (param $t i32) (param $points i32) (param $rows i32) (param $m i32) (param $out i32)
      (param $fx f64) (param $fy f64) (param $fz f64) (param $sx f64) (param $sy f64) (param $sz f64)
    (local $end i32) (local $p i32) (local $x f64) (local $y f64) (local $z f64)
    (local $dx f64) (local $dy f64) (local $dz f64) (local $d2 f64) (local $s f64) (local $v f64)
    (local.set $end (i32.add (local.get $rows) (i32.shl (local.get $m) (i32.const 2))))
    (block $done
      (loop $next
        (br_if $done (i32.ge_u (local.get $rows) (local.get $end)))
        (local.set $p (i32.add (local.get $points) (i32.mul (i32.load (local.get $rows)) (i32.const 24))))
        (local.set $x (f64.add (f64.mul (local.get $fx) (f64.load (local.get $p))) (local.get $sx)))
        (local.set $y (f64.add (f64.mul (local.get $fy) (f64.load offset=8 (local.get $p))) (local.get $sy)))
        (local.set $z (f64.add (f64.mul (local.get $fz) (f64.load offset=16 (local.get $p))) (local.get $sz)))
        ;; $v ← I over the panel at table row $t, at ($x, $y, $z); NaN nearer than the 4-point switch.
        (local.set $dx (f64.sub (local.get $x) (f64.load (local.get $t))))
        (local.set $dy (f64.sub (local.get $y) (f64.load offset=8 (local.get $t))))
        (local.set $dz (f64.sub (local.get $z) (f64.load offset=16 (local.get $t))))
        (local.set $d2 (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))
        (local.set $v
          (if (result f64) (f64.gt (local.get $d2) (f64.load offset=24 (local.get $t)))
            (then
              (local.set $s (local.set $dx (f64.sub (local.get $x) (f64.load offset=48 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=56 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=64 (local.get $t))))
              (f64.div (f64.load offset=72 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=80 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=88 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=96 (local.get $t))))
              (f64.div (f64.load offset=104 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=112 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=120 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=128 (local.get $t))))
              (f64.div (f64.load offset=136 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.get $s))
            (else
              (if (result f64) (f64.gt (local.get $d2) (f64.load offset=32 (local.get $t)))
                (then
              (local.set $s (local.set $dx (f64.sub (local.get $x) (f64.load offset=144 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=152 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=160 (local.get $t))))
              (f64.div (f64.load offset=168 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=176 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=184 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=192 (local.get $t))))
              (f64.div (f64.load offset=200 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=208 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=216 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=224 (local.get $t))))
              (f64.div (f64.load offset=232 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.set $s (f64.add (local.get $s) (block (result f64) (local.set $dx (f64.sub (local.get $x) (f64.load offset=240 (local.get $t))))
              (local.set $dy (f64.sub (local.get $y) (f64.load offset=248 (local.get $t))))
              (local.set $dz (f64.sub (local.get $z) (f64.load offset=256 (local.get $t))))
              (f64.div (f64.load offset=264 (local.get $t)) (f64.sqrt (f64.add (f64.add (f64.mul (local.get $dx) (local.get $dx)) (f64.mul (local.get $dy) (local.get $dy))) (f64.mul (local.get $dz) (local.get $dz))))))))
              (local.get $s))
                (else (f64.const nan))))))
        (f64.store (local.get $out) (local.get $v))
        (local.set $rows (i32.add (local.get $rows) (i32.const 4)))
        (local.set $out (i32.add (local.get $out) (i32.const 8)))
        (br $next))))
)
