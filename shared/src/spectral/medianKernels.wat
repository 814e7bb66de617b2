;; WebAssembly kernel of bandwidth.ts's running median (loaded by medianKernels.ts; rebuild
;; medianKernels.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). It runs a few times a
;; file over a few thousand bins, which V8 ran unoptimised and then optimised twice on a 1 s file (issue #22).
;; Comparisons and moves only, and the one addition and multiplication of an even window's median, as the
;; JavaScript does them, so the medians are the same (tests/shared/bandwidth.test.ts compares both paths).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; medianSmooth(x, top, widen, out, sorted): out[k] for k in [0, top] = the median of x over
  ;; [k - h, k + h] clipped to [0, top], h = min(32, max(4, round(k * widen))) with JavaScript's Math.round
  ;; (ceil(v), less one when that is more than v + 1/2). x and out: f64 arrays (no NaN in x[0..top]);
  ;; sorted: room for 65 f64, the window kept sorted as bins enter at the top and leave at the bottom.
  (func (export "medianSmooth") (param $x i32) (param $top i32) (param $widen f64) (param $out i32) (param $sorted i32)
    (local $k i32) (local $half i32) (local $wantLo i32) (local $wantHi i32) (local $count i32)
    (local $lo i32) (local $hi i32) (local $a i32) (local $b i32) (local $m i32) (local $i i32)
    (local $v f64) (local $kw f64) (local $r f64)
    (local.set $hi (i32.const -1))
    (block $binsDone
      (loop $bins
        (br_if $binsDone (i32.gt_s (local.get $k) (local.get $top)))
        (local.set $kw (f64.mul (f64.convert_i32_s (local.get $k)) (local.get $widen)))
        (local.set $r (f64.ceil (local.get $kw)))
        (if (f64.gt (f64.sub (local.get $r) (f64.const 0.5)) (local.get $kw))
          (then (local.set $r (f64.sub (local.get $r) (f64.const 1)))))
        (local.set $half (i32.trunc_f64_s (f64.min (f64.const 32) (f64.max (f64.const 4) (local.get $r)))))
        (local.set $wantLo (i32.sub (local.get $k) (local.get $half)))
        (if (i32.lt_s (local.get $wantLo) (i32.const 0)) (then (local.set $wantLo (i32.const 0))))
        (local.set $wantHi (i32.add (local.get $k) (local.get $half)))
        (if (i32.gt_s (local.get $wantHi) (local.get $top)) (then (local.set $wantHi (local.get $top))))
        ;; Remove one copy of x[lo] for every bin leaving: the first index not below it holds it.
        (block $leaveDone
          (loop $leave
            (br_if $leaveDone (i32.ge_s (local.get $lo) (local.get $wantLo)))
            (local.set $v (f64.load (i32.add (local.get $x) (i32.shl (local.get $lo) (i32.const 3)))))
            (local.set $a (i32.const 0))
            (local.set $b (local.get $count))
            (block $found
              (loop $search
                (br_if $found (i32.ge_s (local.get $a) (local.get $b)))
                (local.set $m (i32.shr_s (i32.add (local.get $a) (local.get $b)) (i32.const 1)))
                (if (f64.lt (f64.load (i32.add (local.get $sorted) (i32.shl (local.get $m) (i32.const 3)))) (local.get $v))
                  (then (local.set $a (i32.add (local.get $m) (i32.const 1))))
                  (else (local.set $b (local.get $m))))
                (br $search)))
            (local.set $i (i32.add (local.get $a) (i32.const 1)))
            (block $shiftDone
              (loop $shift
                (br_if $shiftDone (i32.ge_s (local.get $i) (local.get $count)))
                (f64.store (i32.add (local.get $sorted) (i32.shl (i32.sub (local.get $i) (i32.const 1)) (i32.const 3)))
                  (f64.load (i32.add (local.get $sorted) (i32.shl (local.get $i) (i32.const 3)))))
                (local.set $i (i32.add (local.get $i) (i32.const 1)))
                (br $shift)))
            (local.set $count (i32.sub (local.get $count) (i32.const 1)))
            (local.set $lo (i32.add (local.get $lo) (i32.const 1)))
            (br $leave)))
        ;; Insert x[hi + 1] after any equal values for every bin entering.
        (block $enterDone
          (loop $enter
            (br_if $enterDone (i32.ge_s (local.get $hi) (local.get $wantHi)))
            (local.set $hi (i32.add (local.get $hi) (i32.const 1)))
            (local.set $v (f64.load (i32.add (local.get $x) (i32.shl (local.get $hi) (i32.const 3)))))
            (local.set $a (i32.const 0))
            (local.set $b (local.get $count))
            (block $found
              (loop $search
                (br_if $found (i32.ge_s (local.get $a) (local.get $b)))
                (local.set $m (i32.shr_s (i32.add (local.get $a) (local.get $b)) (i32.const 1)))
                (if (f64.le (f64.load (i32.add (local.get $sorted) (i32.shl (local.get $m) (i32.const 3)))) (local.get $v))
                  (then (local.set $a (i32.add (local.get $m) (i32.const 1))))
                  (else (local.set $b (local.get $m))))
                (br $search)))
            (local.set $i (local.get $count))
            (block $shiftDone
              (loop $shift
                (br_if $shiftDone (i32.le_s (local.get $i) (local.get $a)))
                (f64.store (i32.add (local.get $sorted) (i32.shl (local.get $i) (i32.const 3)))
                  (f64.load (i32.add (local.get $sorted) (i32.shl (i32.sub (local.get $i) (i32.const 1)) (i32.const 3)))))
                (local.set $i (i32.sub (local.get $i) (i32.const 1)))
                (br $shift)))
            (f64.store (i32.add (local.get $sorted) (i32.shl (local.get $a) (i32.const 3))) (local.get $v))
            (local.set $count (i32.add (local.get $count) (i32.const 1)))
            (br $enter)))
        (f64.store (i32.add (local.get $out) (i32.shl (local.get $k) (i32.const 3)))
          (if (result f64) (i32.and (local.get $count) (i32.const 1))
            (then (f64.load (i32.add (local.get $sorted) (i32.shl (i32.shr_s (i32.sub (local.get $count) (i32.const 1)) (i32.const 1)) (i32.const 3)))))
            (else
              (f64.mul (f64.const 0.5)
                (f64.add
                  (f64.load (i32.add (local.get $sorted) (i32.shl (i32.sub (i32.shr_s (local.get $count) (i32.const 1)) (i32.const 1)) (i32.const 3))))
                  (f64.load (i32.add (local.get $sorted) (i32.shl (i32.shr_s (local.get $count) (i32.const 1)) (i32.const 3)))))))))
        (local.set $k (i32.add (local.get $k) (i32.const 1)))
        (br $bins)))))
