;; WebAssembly SIMD kernels of the level side (loaded by levelKernels.ts; rebuild levelKernels.generated.ts
;; with `node --import tsx scripts/generate-wasm-kernels.ts`). Two channels ride in the two f64 lanes of a v128, so one instruction
;; does the work of two scalar ones. Every lane does exactly the scalar code's IEEE operations in the same
;; order (WebAssembly has no fused multiply-add), so results are bit-identical to the JavaScript path.
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts): growing a memory would detach
  ;; its buffer.
  (import "env" "memory" (memory 1))

  ;; kweightPair(x, z, n, st, co): both K-weighting biquads of ITU-R BS.1770-4 (kWeighting.ts) over n frames
  ;; of two planar float32 channels at byte offsets x and z, adding y² into each channel's sum.
  ;; st (16-byte aligned): five f64x2, lane 0 the x channel, lane 1 the z channel: shelf s1, s2, high-pass
  ;; t1, t2 (transposed direct form II), Σy². co: seven f64: shelf b0 b1 b2 a1 a2, high-pass a1 a2 (its
  ;; numerator is 1, −2, 1). The arithmetic is loudness.ts's filterSegment, operation for operation.
  (func (export "kweightPair") (param $x i32) (param $z i32) (param $n i32) (param $st i32) (param $co i32)
    (local $b0 v128) (local $b1 v128) (local $b2 v128) (local $a1 v128) (local $a2 v128)
    (local $ha1 v128) (local $ha2 v128) (local $minus2 v128)
    (local $s1 v128) (local $s2 v128) (local $t1 v128) (local $t2 v128) (local $sum v128)
    (local $v v128) (local $y1 v128) (local $y2 v128) (local $end i32)
    (local.set $b0 (f64x2.splat (f64.load offset=0 (local.get $co))))
    (local.set $b1 (f64x2.splat (f64.load offset=8 (local.get $co))))
    (local.set $b2 (f64x2.splat (f64.load offset=16 (local.get $co))))
    (local.set $a1 (f64x2.splat (f64.load offset=24 (local.get $co))))
    (local.set $a2 (f64x2.splat (f64.load offset=32 (local.get $co))))
    (local.set $ha1 (f64x2.splat (f64.load offset=40 (local.get $co))))
    (local.set $ha2 (f64x2.splat (f64.load offset=48 (local.get $co))))
    (local.set $minus2 (f64x2.splat (f64.const -2)))
    (local.set $s1 (v128.load offset=0 (local.get $st)))
    (local.set $s2 (v128.load offset=16 (local.get $st)))
    (local.set $t1 (v128.load offset=32 (local.get $st)))
    (local.set $t2 (v128.load offset=48 (local.get $st)))
    (local.set $sum (v128.load offset=64 (local.get $st)))
    (local.set $end (i32.add (local.get $x) (i32.shl (local.get $n) (i32.const 2))))
    (block $done
      (br_if $done (i32.ge_u (local.get $x) (local.get $end)))
      (loop $next
        (local.set $v
          (f64x2.replace_lane 1
            (f64x2.splat (f64.promote_f32 (f32.load (local.get $x))))
            (f64.promote_f32 (f32.load (local.get $z)))))
        ;; y1 = b0·v + s1; s1 = b1·v − a1·y1 + s2; s2 = b2·v − a2·y1
        (local.set $y1 (f64x2.add (f64x2.mul (local.get $b0) (local.get $v)) (local.get $s1)))
        (local.set $s1
          (f64x2.add
            (f64x2.sub (f64x2.mul (local.get $b1) (local.get $v)) (f64x2.mul (local.get $a1) (local.get $y1)))
            (local.get $s2)))
        (local.set $s2 (f64x2.sub (f64x2.mul (local.get $b2) (local.get $v)) (f64x2.mul (local.get $a2) (local.get $y1))))
        ;; y2 = y1 + t1; t1 = −2·y1 − ha1·y2 + t2; t2 = y1 − ha2·y2; sum += y2·y2
        (local.set $y2 (f64x2.add (local.get $y1) (local.get $t1)))
        (local.set $t1
          (f64x2.add
            (f64x2.sub (f64x2.mul (local.get $minus2) (local.get $y1)) (f64x2.mul (local.get $ha1) (local.get $y2)))
            (local.get $t2)))
        (local.set $t2 (f64x2.sub (local.get $y1) (f64x2.mul (local.get $ha2) (local.get $y2))))
        (local.set $sum (f64x2.add (local.get $sum) (f64x2.mul (local.get $y2) (local.get $y2))))
        (local.set $x (i32.add (local.get $x) (i32.const 4)))
        (local.set $z (i32.add (local.get $z) (i32.const 4)))
        (br_if $next (i32.lt_u (local.get $x) (local.get $end)))))
    (v128.store offset=0 (local.get $st) (local.get $s1))
    (v128.store offset=16 (local.get $st) (local.get $s2))
    (v128.store offset=32 (local.get $st) (local.get $t1))
    (v128.store offset=48 (local.get $st) (local.get $t2))
    (v128.store offset=64 (local.get $st) (local.get $sum)))
;; diffChunks(x, count, L, sums, maxima): the click pre-screen's first pass (clicks.ts). Over count
  ;; float32 samples from byte offset x (the two before it readable), chunk by chunk of L samples (the last
  ;; may be short), the second difference d = x[n] − 2·x[n−1] + x[n−2]: Σ|d| into the f64 at sums + 8q and
  ;; the largest |d| into maxima + 8q. Lane 0 takes the even samples of a chunk and lane 1 the odd ones,
  ;; as the JavaScript loop's two partial sums do; pmax is its `if (v > max) max = v`.
  (func (export "diffChunks") (param $x i32) (param $count i32) (param $L i32) (param $sums i32) (param $maxima i32)
    (local $end i32) (local $chunkEnd i32) (local $pairEnd i32)
    (local $sum v128) (local $max v128) (local $d v128) (local $two v128)
    (local $tail f64) (local $lo f64) (local $hi f64)
    (local.set $two (f64x2.splat (f64.const 2)))
    (local.set $end (i32.add (local.get $x) (i32.shl (local.get $count) (i32.const 2))))
    (block $chunksDone
      (loop $chunk
        (br_if $chunksDone (i32.ge_u (local.get $x) (local.get $end)))
        (local.set $chunkEnd (i32.add (local.get $x) (i32.shl (local.get $L) (i32.const 2))))
        (if (i32.gt_u (local.get $chunkEnd) (local.get $end)) (then (local.set $chunkEnd (local.get $end))))
        ;; Whole pairs: up to the last even offset that leaves two samples.
        (local.set $pairEnd (i32.sub (local.get $chunkEnd) (i32.const 4)))
        (local.set $sum (v128.const f64x2 0 0))
        (local.set $max (v128.const f64x2 0 0))
        (block $pairsDone
          (loop $pair
            (br_if $pairsDone (i32.ge_u (local.get $x) (local.get $pairEnd)))
            ;; (x[n], x[n+1]) − 2·(x[n−1], x[n]) + (x[n−2], x[n−1])
            (local.set $d
              (f64x2.abs
                (f64x2.add
                  (f64x2.sub
                    (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $x)))
                    (f64x2.mul (local.get $two) (f64x2.promote_low_f32x4 (v128.load64_zero offset=0 (i32.sub (local.get $x) (i32.const 4))))))
                  (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $x) (i32.const 8)))))))
            (local.set $sum (f64x2.add (local.get $sum) (local.get $d)))
            (local.set $max (f64x2.pmax (local.get $max) (local.get $d)))
            (local.set $x (i32.add (local.get $x) (i32.const 8)))
            (br $pair)))
        ;; An odd sample left: the even lane's, as in the JavaScript loop.
        (if (i32.lt_u (local.get $x) (local.get $chunkEnd))
          (then
            (local.set $tail
              (f64.abs
                (f64.add
                  (f64.sub
                    (f64.promote_f32 (f32.load (local.get $x)))
                    (f64.mul (f64.const 2) (f64.promote_f32 (f32.load (i32.sub (local.get $x) (i32.const 4))))))
                  (f64.promote_f32 (f32.load (i32.sub (local.get $x) (i32.const 8)))))))
            (local.set $sum (f64x2.replace_lane 0 (local.get $sum) (f64.add (f64x2.extract_lane 0 (local.get $sum)) (local.get $tail))))
            (local.set $max (f64x2.pmax (local.get $max) (f64x2.replace_lane 1 (f64x2.splat (local.get $tail)) (f64.const 0))))
            (local.set $x (i32.add (local.get $x) (i32.const 4)))))
        (f64.store (local.get $sums) (f64.add (f64x2.extract_lane 0 (local.get $sum)) (f64x2.extract_lane 1 (local.get $sum))))
        ;; max over the lanes, as `if (w > max) max = w` after lane 0's
        (local.set $lo (f64x2.extract_lane 0 (local.get $max)))
        (local.set $hi (f64x2.extract_lane 1 (local.get $max)))
        (f64.store (local.get $maxima) (select (local.get $hi) (local.get $lo) (f64.gt (local.get $hi) (local.get $lo))))
        (local.set $sums (i32.add (local.get $sums) (i32.const 8)))
        (local.set $maxima (i32.add (local.get $maxima) (i32.const 8)))
        (br $chunk))))
;; flagBits(x, h, end, taps, threshold, ranges) → count: the true-peak meter's flagging pass (truePeak.ts,
  ;; flagByBits). Sample i of the float32 block at byte offset x (i < end) is flagged when its magnitude bits
  ;; exceed `threshold`; it marks outputs [max(i, h), min(i + taps, end)) as candidates, and touching ranges
  ;; merge. The [start, end) pairs go to the i32s at `ranges`; returns how many numbers were written. Four
  ;; samples are tested at once, and only a group with a flagged sample is walked one by one.
  (func (export "flagBits") (param $x i32) (param $h i32) (param $end i32) (param $taps i32) (param $threshold i32) (param $ranges i32) (result i32)
    (local $i i32) (local $stop i32) (local $lo i32) (local $hi i32) (local $count i32)
    (local $rangeStart i32) (local $rangeEnd i32) (local $limit v128) (local $magnitude v128)
    (local.set $rangeStart (i32.const -1))
    (local.set $rangeEnd (i32.const -1))
    (local.set $limit (i32x4.splat (local.get $threshold)))
    (local.set $magnitude (i32x4.splat (i32.const 0x7fffffff)))
    (block $done
      (loop $outer
        (br_if $done (i32.ge_s (local.get $i) (local.get $end)))
        ;; Skip whole groups of four with nothing flagged.
        (block $found
          (loop $skip
            (br_if $found (i32.gt_s (i32.add (local.get $i) (i32.const 4)) (local.get $end)))
            (br_if $found
              (v128.any_true
                (i32x4.gt_s
                  (v128.and (v128.load (i32.add (local.get $x) (i32.shl (local.get $i) (i32.const 2)))) (local.get $magnitude))
                  (local.get $limit))))
            (local.set $i (i32.add (local.get $i) (i32.const 4)))
            (br $skip)))
        ;; One by one through this group (or the last few samples).
        (local.set $stop (i32.add (local.get $i) (i32.const 4)))
        (if (i32.gt_s (local.get $stop) (local.get $end)) (then (local.set $stop (local.get $end))))
        (block $groupDone
          (loop $scalar
            (br_if $groupDone (i32.ge_s (local.get $i) (local.get $stop)))
            (if (i32.gt_s
                  (i32.and (i32.load (i32.add (local.get $x) (i32.shl (local.get $i) (i32.const 2)))) (i32.const 0x7fffffff))
                  (local.get $threshold))
              (then
                (local.set $lo (select (local.get $i) (local.get $h) (i32.gt_s (local.get $i) (local.get $h))))
                (local.set $hi (i32.add (local.get $i) (local.get $taps)))
                (if (i32.gt_s (local.get $hi) (local.get $end)) (then (local.set $hi (local.get $end))))
                (if (i32.le_s (local.get $lo) (local.get $rangeEnd))
                  (then (local.set $rangeEnd (local.get $hi)))
                  (else
                    (if (i32.ge_s (local.get $rangeStart) (i32.const 0))
                      (then
                        (i32.store (i32.add (local.get $ranges) (i32.shl (local.get $count) (i32.const 2))) (local.get $rangeStart))
                        (i32.store offset=4 (i32.add (local.get $ranges) (i32.shl (local.get $count) (i32.const 2))) (local.get $rangeEnd))
                        (local.set $count (i32.add (local.get $count) (i32.const 2)))))
                    (local.set $rangeStart (local.get $lo))
                    (local.set $rangeEnd (local.get $hi))))))
            (local.set $i (i32.add (local.get $i) (i32.const 1)))
            (br $scalar)))
        (br $outer)))
    (if (i32.ge_s (local.get $rangeStart) (i32.const 0))
      (then
        (i32.store (i32.add (local.get $ranges) (i32.shl (local.get $count) (i32.const 2))) (local.get $rangeStart))
        (i32.store offset=4 (i32.add (local.get $ranges) (i32.shl (local.get $count) (i32.const 2))) (local.get $rangeEnd))
        (local.set $count (i32.add (local.get $count) (i32.const 2)))))
    (local.get $count))
;; findEqual(x, k, end) → the first i in [k, end) with x[i] = x[i − 1] (float32 at byte offset x, k ≥ 1), or end:
  ;; valueRuns.ts's search for the start of a run. Float equality, as the JavaScript loop's (0 = −0, NaN is
  ;; never equal), four neighbours at a time.
  (func (export "findEqual") (param $x i32) (param $k i32) (param $end i32) (result i32)
    (local $at i32)
    (block $scalar
      (loop $group
        (br_if $scalar (i32.gt_s (i32.add (local.get $k) (i32.const 4)) (local.get $end)))
        (local.set $at (i32.add (local.get $x) (i32.shl (local.get $k) (i32.const 2))))
        (br_if $scalar (v128.any_true (f32x4.eq (v128.load (local.get $at)) (v128.load (i32.sub (local.get $at) (i32.const 4))))))
        (local.set $k (i32.add (local.get $k) (i32.const 4)))
        (br $group)))
    (block $done
      (loop $one
        (br_if $done (i32.ge_s (local.get $k) (local.get $end)))
        (local.set $at (i32.add (local.get $x) (i32.shl (local.get $k) (i32.const 2))))
        (if (f32.eq (f32.load (local.get $at)) (f32.load (i32.sub (local.get $at) (i32.const 4)))) (then (return (local.get $k))))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $one)))
    (local.get $end))
;; localBounds(x, ranges, count, r, n, best, g) → the first candidate output, from output n of range r on (of
  ;; the [start, end) i32 pairs at `ranges`, `count` numbers), whose bound around its own centre samples
  ;; exceeds `best`, or −1 when none does: truePeak.ts's first per-output bound (fir12x7), for 12 taps, two
  ;; outputs at a time (lane 0 output n, lane 1 output n + 1). x: the float32 block; g: six f64, the folded
  ;; per-tap maxima g0…g5, then the slack for |m|. Any order of the additions is a valid bound (the slack
  ;; covers rounding); the caller bounds the output found again and runs the FIR there.
  (func (export "localBounds") (param $x i32) (param $ranges i32) (param $count i32) (param $r i32) (param $n i32) (param $best f64) (param $g i32) (result i32)
    (local $end i32) (local $base i32) (local $limit v128) (local $half v128) (local $slack v128) (local $m v128) (local $over v128)
    (local $x0 v128) (local $x1 v128) (local $x2 v128) (local $x3 v128) (local $x4 v128) (local $x5 v128) (local $x6 v128) (local $x7 v128) (local $x8 v128) (local $x9 v128) (local $x10 v128) (local $x11 v128)
    (local $g0 v128) (local $g1 v128) (local $g2 v128) (local $g3 v128) (local $g4 v128) (local $g5 v128)
    (local.set $g0 (f64x2.splat (f64.load offset=0 (local.get $g))))
    (local.set $g1 (f64x2.splat (f64.load offset=8 (local.get $g))))
    (local.set $g2 (f64x2.splat (f64.load offset=16 (local.get $g))))
    (local.set $g3 (f64x2.splat (f64.load offset=24 (local.get $g))))
    (local.set $g4 (f64x2.splat (f64.load offset=32 (local.get $g))))
    (local.set $g5 (f64x2.splat (f64.load offset=40 (local.get $g))))
    (local.set $slack (f64x2.splat (f64.load offset=48 (local.get $g))))
    (local.set $half (f64x2.splat (f64.const 0.5)))
    (local.set $limit (f64x2.splat (local.get $best)))
    (block $done
      (loop $range
        (br_if $done (i32.ge_s (local.get $r) (local.get $count)))
        (local.set $end (i32.load offset=4 (i32.add (local.get $ranges) (i32.shl (local.get $r) (i32.const 2)))))
        (block $rangeDone
          (loop $output
            (br_if $rangeDone (i32.ge_s (local.get $n) (local.get $end)))
            (local.set $base (i32.add (local.get $x) (i32.shl (local.get $n) (i32.const 2))))
            (local.set $x0 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 0)))))
            (local.set $x1 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 4)))))
            (local.set $x2 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 8)))))
            (local.set $x3 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 12)))))
            (local.set $x4 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 16)))))
            (local.set $x5 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 20)))))
            (local.set $x6 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 24)))))
            (local.set $x7 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 28)))))
            (local.set $x8 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 32)))))
            (local.set $x9 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 36)))))
            (local.set $x10 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 40)))))
            (local.set $x11 (f64x2.promote_low_f32x4 (v128.load64_zero (i32.sub (local.get $base) (i32.const 44)))))
            (local.set $m (f64x2.mul (local.get $half) (f64x2.add (local.get $x5) (local.get $x6))))
            (local.set $over (f64x2.gt
              (f64x2.add (f64x2.add (f64x2.add (f64x2.add (f64x2.add (f64x2.add (f64x2.mul (f64x2.abs (local.get $m)) (local.get $slack)) (f64x2.mul (local.get $g5) (f64x2.abs (f64x2.sub (local.get $x5) (local.get $x6)))))
                (f64x2.mul (local.get $g4) (f64x2.add (f64x2.abs (f64x2.sub (local.get $x4) (local.get $m))) (f64x2.abs (f64x2.sub (local.get $x7) (local.get $m))))))
                (f64x2.mul (local.get $g3) (f64x2.add (f64x2.abs (f64x2.sub (local.get $x3) (local.get $m))) (f64x2.abs (f64x2.sub (local.get $x8) (local.get $m))))))
                (f64x2.mul (local.get $g2) (f64x2.add (f64x2.abs (f64x2.sub (local.get $x2) (local.get $m))) (f64x2.abs (f64x2.sub (local.get $x9) (local.get $m))))))
                (f64x2.mul (local.get $g1) (f64x2.add (f64x2.abs (f64x2.sub (local.get $x1) (local.get $m))) (f64x2.abs (f64x2.sub (local.get $x10) (local.get $m))))))
                (f64x2.mul (local.get $g0) (f64x2.add (f64x2.abs (f64x2.sub (local.get $x0) (local.get $m))) (f64x2.abs (f64x2.sub (local.get $x11) (local.get $m))))))
              (local.get $limit)))
            (if (v128.any_true (local.get $over))
              (then
                (if (i64.ne (i64x2.extract_lane 0 (local.get $over)) (i64.const 0)) (then (return (local.get $n))))
                (if (i32.lt_s (i32.add (local.get $n) (i32.const 1)) (local.get $end)) (then (return (i32.add (local.get $n) (i32.const 1)))))))
            (local.set $n (i32.add (local.get $n) (i32.const 2)))
            (br $output)))
        (local.set $r (i32.add (local.get $r) (i32.const 2)))
        (if (i32.lt_s (local.get $r) (local.get $count))
          (then (local.set $n (i32.load (i32.add (local.get $ranges) (i32.shl (local.get $r) (i32.const 2)))))))
        (br $range)))
    (i32.const -1))

  ;; windowSums(x, from, n, st): levelWindows.ts's accumulate for one channel over n float32 samples from
  ;; index `from` of the block at byte offset x. st: f64 sum, sum of squares, peak |x| (read and written), and at offset
  ;; 56 (as windowSumsPair's first) an i32, the index of the new peak or -1 when none beat it. Scalar: the
  ;; additions are sequential.
  (func (export "windowSums") (param $x i32) (param $from i32) (param $n i32) (param $st i32)
    (local $i i32) (local $end i32) (local $v f64) (local $a f64)
    (local $sum f64) (local $sq f64) (local $peak f64) (local $at i32)
    (local.set $sum (f64.load (local.get $st)))
    (local.set $sq (f64.load offset=8 (local.get $st)))
    (local.set $peak (f64.load offset=16 (local.get $st)))
    (local.set $at (i32.const -1))
    (local.set $i (local.get $from))
    (local.set $end (i32.add (local.get $from) (local.get $n)))
    (block $done
      (loop $each
        (br_if $done (i32.ge_s (local.get $i) (local.get $end)))
        (local.set $v (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (local.get $i) (i32.const 2))))))
        (local.set $sum (f64.add (local.get $sum) (local.get $v)))
        (local.set $sq (f64.add (local.get $sq) (f64.mul (local.get $v) (local.get $v))))
        (local.set $a (f64.abs (local.get $v)))
        (if (f64.gt (local.get $a) (local.get $peak))
          (then (local.set $peak (local.get $a)) (local.set $at (local.get $i))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each)))
    (f64.store (local.get $st) (local.get $sum))
    (f64.store offset=8 (local.get $st) (local.get $sq))
    (f64.store offset=16 (local.get $st) (local.get $peak))
    (i32.store offset=56 (local.get $st) (local.get $at)))

  ;; windowSumsPair(x, y, from, n, st): levelWindows.ts's accumulatePair for the first channel pair (blocks
  ;; at x and y). st: f64 sumX, sumY, sum x^2, sum y^2, sum xy, peakX, peakY (read and written), then i32 at offsets 56
  ;; and 60 the indices of the new peaks, or -1.
  (func (export "windowSumsPair") (param $x i32) (param $y i32) (param $from i32) (param $n i32) (param $st i32)
    (local $i i32) (local $end i32) (local $u f64) (local $v f64) (local $a f64) (local $b f64)
    (local $sumX f64) (local $sumY f64) (local $sqX f64) (local $sqY f64) (local $xy f64) (local $peakX f64) (local $peakY f64)
    (local $atX i32) (local $atY i32)
    (local.set $sumX (f64.load (local.get $st)))
    (local.set $sumY (f64.load offset=8 (local.get $st)))
    (local.set $sqX (f64.load offset=16 (local.get $st)))
    (local.set $sqY (f64.load offset=24 (local.get $st)))
    (local.set $xy (f64.load offset=32 (local.get $st)))
    (local.set $peakX (f64.load offset=40 (local.get $st)))
    (local.set $peakY (f64.load offset=48 (local.get $st)))
    (local.set $atX (i32.const -1))
    (local.set $atY (i32.const -1))
    (local.set $i (local.get $from))
    (local.set $end (i32.add (local.get $from) (local.get $n)))
    (block $done
      (loop $each
        (br_if $done (i32.ge_s (local.get $i) (local.get $end)))
        (local.set $u (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (local.get $i) (i32.const 2))))))
        (local.set $v (f64.promote_f32 (f32.load (i32.add (local.get $y) (i32.shl (local.get $i) (i32.const 2))))))
        (local.set $sumX (f64.add (local.get $sumX) (local.get $u)))
        (local.set $sumY (f64.add (local.get $sumY) (local.get $v)))
        (local.set $sqX (f64.add (local.get $sqX) (f64.mul (local.get $u) (local.get $u))))
        (local.set $sqY (f64.add (local.get $sqY) (f64.mul (local.get $v) (local.get $v))))
        (local.set $xy (f64.add (local.get $xy) (f64.mul (local.get $u) (local.get $v))))
        (local.set $a (f64.abs (local.get $u)))
        (if (f64.gt (local.get $a) (local.get $peakX))
          (then (local.set $peakX (local.get $a)) (local.set $atX (local.get $i))))
        (local.set $b (f64.abs (local.get $v)))
        (if (f64.gt (local.get $b) (local.get $peakY))
          (then (local.set $peakY (local.get $b)) (local.set $atY (local.get $i))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each)))
    (f64.store (local.get $st) (local.get $sumX))
    (f64.store offset=8 (local.get $st) (local.get $sumY))
    (f64.store offset=16 (local.get $st) (local.get $sqX))
    (f64.store offset=24 (local.get $st) (local.get $sqY))
    (f64.store offset=32 (local.get $st) (local.get $xy))
    (f64.store offset=40 (local.get $st) (local.get $peakX))
    (f64.store offset=48 (local.get $st) (local.get $peakY))
    (i32.store offset=56 (local.get $st) (local.get $atX))
    (i32.store offset=60 (local.get $st) (local.get $atY)))

  ;; fir12x7(x, s0, s1, taps, g, centre, centreAbs, out): truePeak.ts's fir12x7, operation for operation: over
  ;; outputs n in [s0, s1) of the float32 block at x, the bound around the output's own centre samples, then
  ;; the one around the block's centre, and where both beat the running maximum the 7 phases' 12-tap FIR
  ;; (taps: 84 f64, phase-major; g: g0...g5 then the slack, as for localBounds). out: f64 running maximum
  ;; (read and written) and f64 the index n*8 + k + 1 of a new one (written only when one is found).
  ;; The sums are added left to right as the JavaScript writes them; scalar, so the same bits.
  (func (export "fir12x7") (param $x i32) (param $s0 i32) (param $s1 i32) (param $taps i32) (param $g i32)
    (param $centre f64) (param $centreAbs f64) (param $out i32)
    (local $n i32) (local $k i32) (local $o i32) (local $at i32)
    (local $best f64) (local $m f64) (local $y f64) (local $slack f64)
    (local $g0 f64) (local $g1 f64) (local $g2 f64) (local $g3 f64) (local $g4 f64) (local $g5 f64)
    (local $x0 f64) (local $x1 f64) (local $x2 f64) (local $x3 f64) (local $x4 f64) (local $x5 f64) (local $x6 f64) (local $x7 f64) (local $x8 f64) (local $x9 f64) (local $x10 f64) (local $x11 f64)
    (local.set $g0 (f64.load (local.get $g)))
    (local.set $g1 (f64.load offset=8 (local.get $g)))
    (local.set $g2 (f64.load offset=16 (local.get $g)))
    (local.set $g3 (f64.load offset=24 (local.get $g)))
    (local.set $g4 (f64.load offset=32 (local.get $g)))
    (local.set $g5 (f64.load offset=40 (local.get $g)))
    (local.set $slack (f64.load offset=48 (local.get $g)))
    (local.set $best (f64.load (local.get $out)))
    (local.set $at (i32.const -1))
    (local.set $n (local.get $s0))
    (block $done
      (loop $outputs
        (br_if $done (i32.ge_s (local.get $n) (local.get $s1)))
        (block $next
        (local.set $x0 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 0)) (i32.const 2))))))
        (local.set $x1 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 1)) (i32.const 2))))))
        (local.set $x2 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 2)) (i32.const 2))))))
        (local.set $x3 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 3)) (i32.const 2))))))
        (local.set $x4 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 4)) (i32.const 2))))))
        (local.set $x5 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 5)) (i32.const 2))))))
        (local.set $x6 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 6)) (i32.const 2))))))
        (local.set $x7 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 7)) (i32.const 2))))))
        (local.set $x8 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 8)) (i32.const 2))))))
        (local.set $x9 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 9)) (i32.const 2))))))
        (local.set $x10 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 10)) (i32.const 2))))))
        (local.set $x11 (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (i32.sub (local.get $n) (i32.const 11)) (i32.const 2))))))
        (local.set $m (f64.mul (f64.const 0.5) (f64.add (local.get $x5) (local.get $x6))))
        (br_if $next (f64.le (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.mul (f64.abs (local.get $m)) (local.get $slack)) (f64.mul (local.get $g5) (f64.abs (f64.sub (local.get $x5) (local.get $x6))))) (f64.mul (local.get $g4) (f64.add (f64.abs (f64.sub (local.get $x4) (local.get $m))) (f64.abs (f64.sub (local.get $x7) (local.get $m)))))) (f64.mul (local.get $g3) (f64.add (f64.abs (f64.sub (local.get $x3) (local.get $m))) (f64.abs (f64.sub (local.get $x8) (local.get $m)))))) (f64.mul (local.get $g2) (f64.add (f64.abs (f64.sub (local.get $x2) (local.get $m))) (f64.abs (f64.sub (local.get $x9) (local.get $m)))))) (f64.mul (local.get $g1) (f64.add (f64.abs (f64.sub (local.get $x1) (local.get $m))) (f64.abs (f64.sub (local.get $x10) (local.get $m)))))) (f64.mul (local.get $g0) (f64.add (f64.abs (f64.sub (local.get $x0) (local.get $m))) (f64.abs (f64.sub (local.get $x11) (local.get $m)))))) (local.get $best)))
        (br_if $next (f64.le (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (local.get $centreAbs) (f64.mul (local.get $g5) (f64.add (f64.abs (f64.sub (local.get $x5) (local.get $centre))) (f64.abs (f64.sub (local.get $x6) (local.get $centre)))))) (f64.mul (local.get $g4) (f64.add (f64.abs (f64.sub (local.get $x4) (local.get $centre))) (f64.abs (f64.sub (local.get $x7) (local.get $centre)))))) (f64.mul (local.get $g3) (f64.add (f64.abs (f64.sub (local.get $x3) (local.get $centre))) (f64.abs (f64.sub (local.get $x8) (local.get $centre)))))) (f64.mul (local.get $g2) (f64.add (f64.abs (f64.sub (local.get $x2) (local.get $centre))) (f64.abs (f64.sub (local.get $x9) (local.get $centre)))))) (f64.mul (local.get $g1) (f64.add (f64.abs (f64.sub (local.get $x1) (local.get $centre))) (f64.abs (f64.sub (local.get $x10) (local.get $centre)))))) (f64.mul (local.get $g0) (f64.add (f64.abs (f64.sub (local.get $x0) (local.get $centre))) (f64.abs (f64.sub (local.get $x11) (local.get $centre)))))) (local.get $best)))
        (local.set $k (i32.const 0))
        (local.set $o (local.get $taps))
        (block $phasesDone
          (loop $phases
            (br_if $phasesDone (i32.ge_s (local.get $k) (i32.const 7)))
            (local.set $y (f64.abs (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.add (f64.mul (f64.load offset=0 (local.get $o)) (local.get $x0)) (f64.mul (f64.load offset=8 (local.get $o)) (local.get $x1))) (f64.mul (f64.load offset=16 (local.get $o)) (local.get $x2))) (f64.mul (f64.load offset=24 (local.get $o)) (local.get $x3))) (f64.mul (f64.load offset=32 (local.get $o)) (local.get $x4))) (f64.mul (f64.load offset=40 (local.get $o)) (local.get $x5))) (f64.mul (f64.load offset=48 (local.get $o)) (local.get $x6))) (f64.mul (f64.load offset=56 (local.get $o)) (local.get $x7))) (f64.mul (f64.load offset=64 (local.get $o)) (local.get $x8))) (f64.mul (f64.load offset=72 (local.get $o)) (local.get $x9))) (f64.mul (f64.load offset=80 (local.get $o)) (local.get $x10))) (f64.mul (f64.load offset=88 (local.get $o)) (local.get $x11)))))
            (if (f64.gt (local.get $y) (local.get $best))
              (then
                (local.set $best (local.get $y))
                (local.set $at (i32.add (i32.add (i32.shl (local.get $n) (i32.const 3)) (local.get $k)) (i32.const 1)))))
            (local.set $k (i32.add (local.get $k) (i32.const 1)))
            (local.set $o (i32.add (local.get $o) (i32.const 96)))
            (br $phases))))
        (local.set $n (i32.add (local.get $n) (i32.const 1)))
        (br $outputs)))
    (if (i32.ge_s (local.get $at) (i32.const 0))
      (then
        (f64.store (local.get $out) (local.get $best))
        (f64.store offset=8 (local.get $out) (f64.convert_i32_s (local.get $at))))))

  ;; rangePeak(x, ranges, count, out): truePeak.ts's phase 0 over the candidate ranges (the [start, end) i32
  ;; pairs at `ranges`, `count` numbers) of the float32 block at x: the first |x[i]| above the f64 at out
  ;; (read), in order; writes the new maximum there and its index as an i32 at out + 8 (-1 when none beat it).
  (func (export "rangePeak") (param $x i32) (param $ranges i32) (param $count i32) (param $out i32)
    (local $r i32) (local $i i32) (local $end i32) (local $a f64) (local $best f64) (local $at i32)
    (local.set $best (f64.load (local.get $out)))
    (local.set $at (i32.const -1))
    (block $done
      (loop $eachRange
        (br_if $done (i32.ge_s (local.get $r) (local.get $count)))
        (local.set $i (i32.load (i32.add (local.get $ranges) (i32.shl (local.get $r) (i32.const 2)))))
        (local.set $end (i32.load offset=4 (i32.add (local.get $ranges) (i32.shl (local.get $r) (i32.const 2)))))
        (block $rangeDone
          (loop $each
            (br_if $rangeDone (i32.ge_s (local.get $i) (local.get $end)))
            (local.set $a (f64.abs (f64.promote_f32 (f32.load (i32.add (local.get $x) (i32.shl (local.get $i) (i32.const 2)))))))
            (if (f64.gt (local.get $a) (local.get $best))
              (then (local.set $best (local.get $a)) (local.set $at (local.get $i))))
            (local.set $i (i32.add (local.get $i) (i32.const 1)))
            (br $each)))
        (local.set $r (i32.add (local.get $r) (i32.const 2)))
        (br $eachRange)))
    (f64.store (local.get $out) (local.get $best))
    (i32.store offset=8 (local.get $out) (local.get $at)))
)
