;; The fingerprint's hot loops in WebAssembly SIMD, built into kernels.generated.ts by
;; scripts/generate-wasm-kernels.ts (wabt's wat2wasm); loaded by wasmKernels.ts.
;;
;; Resampler (resampler.ts, resamplerSimd.ts): `plan`, then `pair` or `single`. `pair` repeats the JavaScript loop's arithmetic exactly: two float64 partial sums per channel, one over
;; the even taps and one over the odd ones, each added in tap order (lane 0 and lane 1 of an f64x2);
;; products of float32 samples and float32 taps are exact in float64; then lane 0 + lane 1, rounded
;; to float32 once on the store. WebAssembly has no fused multiply-add outside the relaxed-SIMD
;; proposal, so every result is bit-identical to the JavaScript loop's.
;;
;; schedule: `count` pairs of i32 (byte offset of the output's first input in a channel buffer,
;; byte offset of its kernel row); `width` taps a row, even and ≥ 2.
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts): growing a memory would detach its buffer.
  (import "env" "memory" (memory 1))

  ;; Schedules up to `capacity` outputs from output number `index` on, as resampler.ts's JavaScript
  ;; loop picks them, in the same float64 operations: x = index · ratio; the input i0 = floor(x) and
  ;; the phase p = Math.round((x − i0) · phases), a phase of `phases` being phase 0 of the next input;
  ;; stop at x ≥ limit or when the kernel would reach past `available`. Math.round (ECMAScript: ties
  ;; toward +∞) is ceil(y) less 1 where ceil(y) − 0.5 > y: exact for 0 ≤ y ≤ phases. Returns how many.
  (func (export "plan")
    (param $index f64) (param $ratio f64) (param $limit f64) (param $origin f64) (param $available f64)
    (param $lead f64) (param $width i32) (param $phases f64) (param $schedule i32) (param $capacity i32)
    (result i32)
    (local $n i32) (local $x f64) (local $i0 f64) (local $y f64) (local $p f64)
    (block $done
      (loop $output
        (br_if $done (i32.ge_u (local.get $n) (local.get $capacity)))
        (local.set $x (f64.mul (local.get $index) (local.get $ratio)))
        (br_if $done (f64.ge (local.get $x) (local.get $limit)))
        (local.set $i0 (f64.floor (local.get $x)))
        (local.set $y (f64.mul (f64.sub (local.get $x) (local.get $i0)) (local.get $phases)))
        (local.set $p (f64.ceil (local.get $y)))
        ;; A select, not a branch: which way it goes is as good as random from one output to the next.
        (local.set $p (select (f64.sub (local.get $p) (f64.const 1)) (local.get $p)
          (f64.gt (f64.sub (local.get $p) (f64.const 0.5)) (local.get $y))))
        (if (f64.eq (local.get $p) (local.get $phases))
          (then
            (local.set $i0 (f64.add (local.get $i0) (f64.const 1)))
            (local.set $p (f64.const 0))))
        (br_if $done (f64.ge (f64.add (local.get $i0) (local.get $lead)) (f64.sub (local.get $available) (f64.const 1))))
        (i32.store (local.get $schedule)
          (i32.shl (i32.trunc_f64_s (f64.sub (f64.sub (local.get $i0) (local.get $lead)) (local.get $origin))) (i32.const 2)))
        (i32.store offset=4 (local.get $schedule)
          (i32.shl (i32.mul (i32.trunc_f64_s (local.get $p)) (local.get $width)) (i32.const 2)))
        (local.set $schedule (i32.add (local.get $schedule) (i32.const 8)))
        (local.set $index (f64.add (local.get $index) (f64.const 1)))
        (local.set $n (i32.add (local.get $n) (i32.const 1)))
        (br $output)))
    (local.get $n))

  (func (export "pair")
    (param $left i32) (param $right i32) (param $kernel i32) (param $schedule i32) (param $count i32)
    (param $outLeft i32) (param $outRight i32) (param $width i32)
    (local $end i32) (local $l i32) (local $r i32) (local $k i32) (local $kEnd i32)
    (local $sumL v128) (local $sumR v128) (local $taps v128)
    (local.set $end (i32.add (local.get $schedule) (i32.shl (local.get $count) (i32.const 3))))
    (block $done
      (br_if $done (i32.eqz (local.get $count)))
      (loop $output
        (local.set $l (i32.add (local.get $left) (i32.load (local.get $schedule))))
        (local.set $r (i32.add (local.get $right) (i32.load (local.get $schedule))))
        (local.set $k (i32.add (local.get $kernel) (i32.load offset=4 (local.get $schedule))))
        (local.set $kEnd (i32.add (local.get $k) (i32.shl (local.get $width) (i32.const 2))))
        (local.set $sumL (v128.const i64x2 0 0))
        (local.set $sumR (v128.const i64x2 0 0))
        (loop $tap
          (local.set $taps (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $k))))
          (local.set $sumL (f64x2.add (local.get $sumL)
            (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $l))) (local.get $taps))))
          (local.set $sumR (f64x2.add (local.get $sumR)
            (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $r))) (local.get $taps))))
          (local.set $l (i32.add (local.get $l) (i32.const 8)))
          (local.set $r (i32.add (local.get $r) (i32.const 8)))
          (local.set $k (i32.add (local.get $k) (i32.const 8)))
          (br_if $tap (i32.lt_u (local.get $k) (local.get $kEnd))))
        (f32.store (local.get $outLeft)
          (f32.demote_f64 (f64.add (f64x2.extract_lane 0 (local.get $sumL)) (f64x2.extract_lane 1 (local.get $sumL)))))
        (f32.store (local.get $outRight)
          (f32.demote_f64 (f64.add (f64x2.extract_lane 0 (local.get $sumR)) (f64x2.extract_lane 1 (local.get $sumR)))))
        (local.set $outLeft (i32.add (local.get $outLeft) (i32.const 4)))
        (local.set $outRight (i32.add (local.get $outRight) (i32.const 4)))
        (local.set $schedule (i32.add (local.get $schedule) (i32.const 8)))
        (br_if $output (i32.lt_u (local.get $schedule) (local.get $end))))))

  (func (export "single")
    (param $input i32) (param $kernel i32) (param $schedule i32) (param $count i32)
    (param $out i32) (param $width i32)
    (local $end i32) (local $x i32) (local $k i32) (local $kEnd i32) (local $sum v128)
    (local.set $end (i32.add (local.get $schedule) (i32.shl (local.get $count) (i32.const 3))))
    (block $done
      (br_if $done (i32.eqz (local.get $count)))
      (loop $output
        (local.set $x (i32.add (local.get $input) (i32.load (local.get $schedule))))
        (local.set $k (i32.add (local.get $kernel) (i32.load offset=4 (local.get $schedule))))
        (local.set $kEnd (i32.add (local.get $k) (i32.shl (local.get $width) (i32.const 2))))
        (local.set $sum (v128.const i64x2 0 0))
        (loop $tap
          (local.set $sum (f64x2.add (local.get $sum)
            (f64x2.mul (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $x)))
              (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $k))))))
          (local.set $x (i32.add (local.get $x) (i32.const 8)))
          (local.set $k (i32.add (local.get $k) (i32.const 8)))
          (br_if $tap (i32.lt_u (local.get $k) (local.get $kEnd))))
        (f32.store (local.get $out)
          (f32.demote_f64 (f64.add (f64x2.extract_lane 0 (local.get $sum)) (f64x2.extract_lane 1 (local.get $sum)))))
        (local.set $out (i32.add (local.get $out) (i32.const 4)))
        (local.set $schedule (i32.add (local.get $schedule) (i32.const 8)))
        (br_if $output (i32.lt_u (local.get $schedule) (local.get $end))))))
;; Peak picker (landmarks.ts): `rowMax`, then `candidates`.

  ;; out[i] = max of src[i … i + 2·radius] for i in [0, length), where src holds the row from
  ;; `radius` on and −∞ around it (and for ≥ 64 values past `size`): widths 2, 4, 8 … by doubling into
  ;; `work` (`size` positions a pass, a multiple of 4), then two overlapping windows of the largest
  ;; width. A maximum is one of its inputs, so this is exactly what a scan finds, except around a NaN
  ;; (f32x4.max spreads it): returns 1 if the row holds none, else 0, and the caller then scans.
  (func (export "rowMax")
    (param $src i32) (param $work i32) (param $out i32) (param $length i32) (param $radius i32) (param $size i32)
    (result i32)
    (local $w i32) (local $s i32) (local $cur i32) (local $i i32) (local $shift i32) (local $nan v128)
    (local.set $w (i32.add (i32.shl (local.get $radius) (i32.const 1)) (i32.const 1)))
    (local.set $s (i32.const 1))
    (local.set $cur (local.get $src))
    (block $widths
      (loop $width
        (br_if $widths (i32.gt_u (i32.shl (local.get $s) (i32.const 1)) (local.get $w)))
        (local.set $shift (i32.shl (local.get $s) (i32.const 2)))
        (local.set $i (i32.const 0))
        (loop $pass
          (v128.store (i32.add (local.get $work) (local.get $i))
            (f32x4.max (v128.load (i32.add (local.get $cur) (local.get $i)))
              (v128.load (i32.add (i32.add (local.get $cur) (local.get $i)) (local.get $shift)))))
          (local.set $i (i32.add (local.get $i) (i32.const 16)))
          (br_if $pass (i32.lt_u (local.get $i) (i32.shl (local.get $size) (i32.const 2)))))
        (local.set $cur (local.get $work))
        (local.set $s (i32.shl (local.get $s) (i32.const 1)))
        (br $width)))
    ;; The two windows of width s starting at i and at i + w − s cover exactly [i, i + w).
    (local.set $shift (i32.shl (i32.sub (local.get $w) (local.get $s)) (i32.const 2)))
    (local.set $i (i32.const 0))
    (block $vectors
      (loop $vector
        (br_if $vectors (i32.gt_u (i32.add (local.get $i) (i32.const 16)) (i32.shl (local.get $length) (i32.const 2))))
        (v128.store (i32.add (local.get $out) (local.get $i))
          (f32x4.max (v128.load (i32.add (local.get $cur) (local.get $i)))
            (v128.load (i32.add (i32.add (local.get $cur) (local.get $i)) (local.get $shift)))))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br $vector)))
    ;; The last length mod 4 values one at a time: `out` is one row of a ring, with another right after it.
    (block $scalars
      (loop $scalar
        (br_if $scalars (i32.ge_u (local.get $i) (i32.shl (local.get $length) (i32.const 2))))
        (f32.store (i32.add (local.get $out) (local.get $i))
          (f32.max (f32.load (i32.add (local.get $cur) (local.get $i)))
            (f32.load (i32.add (i32.add (local.get $cur) (local.get $i)) (local.get $shift)))))
        (local.set $i (i32.add (local.get $i) (i32.const 4)))
        (br $scalar)))
    ;; NaN anywhere in the row (the −∞ after it, read by the last vector, is not NaN).
    (local.set $nan (v128.const i32x4 0 0 0 0))
    (local.set $i (i32.const 0))
    (block $checked
      (loop $check
        (br_if $checked (i32.ge_u (local.get $i) (i32.shl (local.get $length) (i32.const 2))))
        (local.set $cur (i32.add (i32.add (local.get $src) (i32.shl (local.get $radius) (i32.const 2))) (local.get $i)))
        (local.set $nan (v128.or (local.get $nan) (f32x4.ne (v128.load (local.get $cur)) (v128.load (local.get $cur)))))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br $check)))
    (i32.eqz (v128.any_true (local.get $nan))))

  ;; Writes to `out` (i32) the bins b in [0, bins) where row[b] equals max[b] and, as a float64 like
  ;; the JavaScript comparison, is ≥ floor; returns how many, in increasing order.
  (func (export "candidates")
    (param $row i32) (param $max i32) (param $bins i32) (param $floor f64) (param $out i32) (result i32)
    (local $b i32) (local $n i32) (local $v f32)
    (block $done
      (loop $bin
        (br_if $done (i32.ge_u (local.get $b) (local.get $bins)))
        (local.set $v (f32.load (i32.add (local.get $row) (i32.shl (local.get $b) (i32.const 2)))))
        (if (i32.and
              (f32.eq (local.get $v) (f32.load (i32.add (local.get $max) (i32.shl (local.get $b) (i32.const 2)))))
              (f64.ge (f64.promote_f32 (local.get $v)) (local.get $floor)))
          (then
            (i32.store (i32.add (local.get $out) (i32.shl (local.get $n) (i32.const 2))) (local.get $b))
            (local.set $n (i32.add (local.get $n) (i32.const 1)))))
        (local.set $b (i32.add (local.get $b) (i32.const 1)))
        (br $bin)))
    (local.get $n))
;; Halving (halvingStage.ts, halvingSimd.ts): `halvePair` for two channels, `halveSingle` for one.

  ;; `pairs` outputs per channel, y = ((b + 3·(c + e0)) + e1) · 0.125 in float64 as the JavaScript
  ;; stage computes it (b, c the two newest inputs, e0, e1 the next two), rounded to float32 on the
  ;; store. state: float64 b of both channels, then c of both (lane 0 the first channel), in and out.
  (func (export "halvePair")
    (param $inL i32) (param $inR i32) (param $pairs i32) (param $outL i32) (param $outR i32) (param $state i32)
    (local $b v128) (local $c v128) (local $e0 v128) (local $e1 v128) (local $t v128) (local $y v128) (local $end i32)
    (local.set $b (v128.load (local.get $state)))
    (local.set $c (v128.load offset=16 (local.get $state)))
    (local.set $end (i32.add (local.get $inL) (i32.shl (local.get $pairs) (i32.const 3))))
    (block $done
      (br_if $done (i32.eqz (local.get $pairs)))
      (loop $pair
        ;; (L[2j], R[2j], L[2j+1], R[2j+1]) as float32, then each half to float64.
        (local.set $t (i8x16.shuffle 0 1 2 3 16 17 18 19 4 5 6 7 20 21 22 23
          (v128.load64_zero (local.get $inL)) (v128.load64_zero (local.get $inR))))
        (local.set $e0 (f64x2.promote_low_f32x4 (local.get $t)))
        (local.set $e1 (f64x2.promote_low_f32x4
          (i8x16.shuffle 8 9 10 11 12 13 14 15 8 9 10 11 12 13 14 15 (local.get $t) (local.get $t))))
        (local.set $y (f32x4.demote_f64x2_zero
          (f64x2.mul
            (f64x2.add
              (f64x2.add (local.get $b) (f64x2.mul (f64x2.splat (f64.const 3)) (f64x2.add (local.get $c) (local.get $e0))))
              (local.get $e1))
            (f64x2.splat (f64.const 0.125)))))
        (v128.store32_lane 0 (local.get $outL) (local.get $y))
        (v128.store32_lane 1 (local.get $outR) (local.get $y))
        (local.set $b (local.get $e0))
        (local.set $c (local.get $e1))
        (local.set $inL (i32.add (local.get $inL) (i32.const 8)))
        (local.set $inR (i32.add (local.get $inR) (i32.const 8)))
        (local.set $outL (i32.add (local.get $outL) (i32.const 4)))
        (local.set $outR (i32.add (local.get $outR) (i32.const 4)))
        (br_if $pair (i32.lt_u (local.get $inL) (local.get $end)))))
    (v128.store (local.get $state) (local.get $b))
    (v128.store offset=16 (local.get $state) (local.get $c)))

  ;; The same for one channel; state: float64 b at 0, c at 16.
  (func (export "halveSingle")
    (param $in i32) (param $pairs i32) (param $out i32) (param $state i32)
    (local $b f64) (local $c f64) (local $e0 f64) (local $e1 f64) (local $end i32)
    (local.set $b (f64.load (local.get $state)))
    (local.set $c (f64.load offset=16 (local.get $state)))
    (local.set $end (i32.add (local.get $in) (i32.shl (local.get $pairs) (i32.const 3))))
    (block $done
      (br_if $done (i32.eqz (local.get $pairs)))
      (loop $pair
        (local.set $e0 (f64.promote_f32 (f32.load (local.get $in))))
        (local.set $e1 (f64.promote_f32 (f32.load offset=4 (local.get $in))))
        (f32.store (local.get $out) (f32.demote_f64
          (f64.mul
            (f64.add (f64.add (local.get $b) (f64.mul (f64.const 3) (f64.add (local.get $c) (local.get $e0)))) (local.get $e1))
            (f64.const 0.125))))
        (local.set $b (local.get $e0))
        (local.set $c (local.get $e1))
        (local.set $in (i32.add (local.get $in) (i32.const 8)))
        (local.set $out (i32.add (local.get $out) (i32.const 4)))
        (br_if $pair (i32.lt_u (local.get $in) (local.get $end)))))
    (f64.store (local.get $state) (local.get $b))
    (f64.store offset=16 (local.get $state) (local.get $c)))
)
