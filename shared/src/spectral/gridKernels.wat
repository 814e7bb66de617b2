;; WebAssembly kernels of the spectrogram accumulator (loaded by gridKernels.ts for spectrogramGrid.ts; rebuild
;; gridKernels.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). A short file's few
;; frames never let V8 optimise the JavaScript loops (issue #22's one-file scan); here they run compiled from
;; the first frame. Every operation is the JavaScript's own (IEEE double, float32 stores rounded to nearest),
;; in the same order, so the grid is the same bit for bit (tests/shared/spectrogramGrid.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; rows(spectrum, n, firstBin, binCount, fraction, powerScale, out): each of n rows' power from a frame's
  ;; amplitude^2 spectrum (f64): the mean of its binCount[i] bins from firstBin[i] (i32 each), or where a row
  ;; holds no whole bin (binCount 0), the value at its centre, fraction[i] (f64) of the way from bin
  ;; firstBin[i] to the next; times powerScale. out: n f64.
  (func (export "rows") (param $spectrum i32) (param $n i32) (param $firstBin i32) (param $binCount i32)
    (param $fraction i32) (param $powerScale f64) (param $out i32)
    (local $i i32) (local $k i32) (local $end i32) (local $count i32) (local $sum f64) (local $f f64)
    (local $at i32)
    (block $done
      (loop $row
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $k (i32.load (i32.add (local.get $firstBin) (i32.shl (local.get $i) (i32.const 2)))))
        (local.set $count (i32.load (i32.add (local.get $binCount) (i32.shl (local.get $i) (i32.const 2)))))
        (local.set $at (i32.add (local.get $spectrum) (i32.shl (local.get $k) (i32.const 3))))
        (if (i32.eqz (local.get $count))
          (then
            (local.set $f (f64.load (i32.add (local.get $fraction) (i32.shl (local.get $i) (i32.const 3)))))
            (f64.store (i32.add (local.get $out) (i32.shl (local.get $i) (i32.const 3)))
              (f64.mul
                (f64.add
                  (f64.mul (f64.load (local.get $at)) (f64.sub (f64.const 1) (local.get $f)))
                  (f64.mul (f64.load offset=8 (local.get $at)) (local.get $f)))
                (local.get $powerScale))))
          (else
            (local.set $sum (f64.const 0))
            (local.set $end (i32.add (local.get $at) (i32.shl (local.get $count) (i32.const 3))))
            (loop $bin
              (local.set $sum (f64.add (local.get $sum) (f64.load (local.get $at))))
              (local.set $at (i32.add (local.get $at) (i32.const 8)))
              (br_if $bin (i32.lt_u (local.get $at) (local.get $end))))
            (f64.store (i32.add (local.get $out) (i32.shl (local.get $i) (i32.const 3)))
              (f64.mul (f64.div (local.get $sum) (f64.convert_i32_s (local.get $count))) (local.get $powerScale)))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $row))))

  ;; max(column, rows, n): column[i] (f32) = rows[i] (f64, rounded to f32) where rows[i] > column[i].
  (func (export "max") (param $column i32) (param $rows i32) (param $n i32)
    (local $i i32) (local $v f64)
    (block $done
      (loop $each
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $v (f64.load (i32.add (local.get $rows) (i32.shl (local.get $i) (i32.const 3)))))
        (if (f64.gt (local.get $v) (f64.promote_f32 (f32.load (i32.add (local.get $column) (i32.shl (local.get $i) (i32.const 2))))))
          (then (f32.store (i32.add (local.get $column) (i32.shl (local.get $i) (i32.const 2))) (f32.demote_f64 (local.get $v)))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each))))

  ;; add(column, rows, n): column[i] (f32) = column[i] + rows[i], added in f64 and rounded to f32.
  (func (export "add") (param $column i32) (param $rows i32) (param $n i32)
    (local $i i32) (local $p i32)
    (block $done
      (loop $each
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $p (i32.add (local.get $column) (i32.shl (local.get $i) (i32.const 2))))
        (f32.store (local.get $p)
          (f32.demote_f64
            (f64.add
              (f64.promote_f32 (f32.load (local.get $p)))
              (f64.load (i32.add (local.get $rows) (i32.shl (local.get $i) (i32.const 3)))))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each)))))
