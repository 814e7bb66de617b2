;; WebAssembly kernel of waveformEnvelope.ts's per-column minimum and maximum (loaded there; rebuild
;; waveformKernels.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). Every sample of a
;; file passes through it once, which on a short file V8 ran unoptimised and then optimised (issue #22).
;; Float32 compares, as the JavaScript's double compares of the same float32 values come out, in the same
;; order (channel pairs, then the odd one), so equal values (0 and -0) are kept as the JavaScript keeps them.
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; envelope(base, stride, channels, frames, position, column, columns, total, minAt, maxAt) -> column:
  ;; the block's float32 channels lie at base + 4 * stride * c, `frames` each, its first frame is `position`
  ;; of the stream, and `column` holds it. Column c holds frames [start(c), start(c + 1)), start(c) =
  ;; ceil(c * total / columns) (infinity from c = columns on). minAt and maxAt: float32 per column, updated.
  ;; Returns the column of the block's last frame.
  (func $start (param $c i32) (param $columns i32) (param $total f64) (result f64)
    (if (result f64) (i32.ge_s (local.get $c) (local.get $columns))
      (then (f64.const inf))
      (else (f64.ceil (f64.div (f64.mul (f64.convert_i32_s (local.get $c)) (local.get $total)) (f64.convert_i32_s (local.get $columns)))))))

  (func (export "envelope")
    (param $base i32) (param $stride i32) (param $channels i32) (param $frames i32) (param $position f64)
    (param $column i32) (param $columns i32) (param $total f64) (param $minAt i32) (param $maxAt i32) (result i32)
    (local $columnEnd f64) (local $i i32) (local $n i32) (local $end i32) (local $c i32) (local $j i32)
    (local $x i32) (local $y i32) (local $lo f32) (local $hi f32) (local $v f32) (local $w f32)
    (local.set $columnEnd (call $start (i32.add (local.get $column) (i32.const 1)) (local.get $columns) (local.get $total)))
    (block $done
      (loop $spans
        (br_if $done (i32.ge_s (local.get $i) (local.get $frames)))
        (block $inColumn
          (loop $advance
            (br_if $inColumn (f64.lt (local.get $position) (local.get $columnEnd)))
            (local.set $column (i32.add (local.get $column) (i32.const 1)))
            (local.set $columnEnd (call $start (i32.add (local.get $column) (i32.const 1)) (local.get $columns) (local.get $total)))
            (br $advance)))
        (local.set $n (i32.trunc_f64_s (f64.min
          (f64.convert_i32_s (i32.sub (local.get $frames) (local.get $i)))
          (f64.sub (local.get $columnEnd) (local.get $position)))))
        (local.set $lo (f32.load (i32.add (local.get $minAt) (i32.shl (local.get $column) (i32.const 2)))))
        (local.set $hi (f32.load (i32.add (local.get $maxAt) (i32.shl (local.get $column) (i32.const 2)))))
        (local.set $end (i32.add (local.get $i) (local.get $n)))
        (local.set $c (i32.const 0))
        (block $pairsDone
          (loop $pairs
            (br_if $pairsDone (i32.ge_s (i32.add (local.get $c) (i32.const 1)) (local.get $channels)))
            (local.set $x (i32.add (local.get $base) (i32.shl (i32.mul (local.get $stride) (local.get $c)) (i32.const 2))))
            (local.set $y (i32.add (local.get $x) (i32.shl (local.get $stride) (i32.const 2))))
            (local.set $j (local.get $i))
            (block $samplesDone
              (loop $samples
                (br_if $samplesDone (i32.ge_s (local.get $j) (local.get $end)))
                (local.set $v (f32.load (i32.add (local.get $x) (i32.shl (local.get $j) (i32.const 2)))))
                (local.set $w (f32.load (i32.add (local.get $y) (i32.shl (local.get $j) (i32.const 2)))))
                (if (f32.lt (local.get $v) (local.get $lo)) (then (local.set $lo (local.get $v))))
                (if (f32.gt (local.get $v) (local.get $hi)) (then (local.set $hi (local.get $v))))
                (if (f32.lt (local.get $w) (local.get $lo)) (then (local.set $lo (local.get $w))))
                (if (f32.gt (local.get $w) (local.get $hi)) (then (local.set $hi (local.get $w))))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $samples)))
            (local.set $c (i32.add (local.get $c) (i32.const 2)))
            (br $pairs)))
        (if (i32.lt_s (local.get $c) (local.get $channels))
          (then
            (local.set $x (i32.add (local.get $base) (i32.shl (i32.mul (local.get $stride) (local.get $c)) (i32.const 2))))
            (local.set $j (local.get $i))
            (block $oneDone
              (loop $one
                (br_if $oneDone (i32.ge_s (local.get $j) (local.get $end)))
                (local.set $v (f32.load (i32.add (local.get $x) (i32.shl (local.get $j) (i32.const 2)))))
                (if (f32.lt (local.get $v) (local.get $lo)) (then (local.set $lo (local.get $v))))
                (if (f32.gt (local.get $v) (local.get $hi)) (then (local.set $hi (local.get $v))))
                (local.set $j (i32.add (local.get $j) (i32.const 1)))
                (br $one)))))
        (f32.store (i32.add (local.get $minAt) (i32.shl (local.get $column) (i32.const 2))) (local.get $lo))
        (f32.store (i32.add (local.get $maxAt) (i32.shl (local.get $column) (i32.const 2))) (local.get $hi))
        (local.set $i (local.get $end))
        (local.set $position (f64.add (local.get $position) (f64.convert_i32_s (local.get $n))))
        (br $spans)))
    (local.get $column)))
