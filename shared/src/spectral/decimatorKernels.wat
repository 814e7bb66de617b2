;; WebAssembly kernel of the low-rate decimator's FIR (loaded by decimatorKernels.ts for decimator.ts; rebuild
;; decimatorKernels.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). Each output is
;; summed from 0 in float64 over the taps in order, each tap times its float32 input widened, and rounded
;; once to float32: exactly the IEEE operations of decimator.ts's JavaScript (WebAssembly has no fused
;; multiply-add), so the outputs are bit-identical (tests/shared/decimator.test.ts). Issue #22: the
;; JavaScript runs unoptimised for most of a short file and boxes every intermediate double.
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts): growing a memory would detach
  ;; its buffer.
  (import "env" "memory" (memory 1))

  ;; fir(x, step, count, taps, tapCount, out): out[m] = f32(Σ_j taps[j]·x[i_m − j]) for m in [0, count),
  ;; i_m = m·step. x: byte offset of the float32 input of the first output (inputs before it down to
  ;; x − 4·(tapCount − 1) must be in memory); taps: byte offset of tapCount float64; out: byte offset of
  ;; count float32.
  (func (export "fir") (param $x i32) (param $step i32) (param $count i32) (param $taps i32) (param $tapCount i32) (param $out i32)
    (local $end i32) (local $acc f64) (local $j i32) (local $p i32) (local $t i32) (local $stride i32)
    (local.set $end (i32.add (local.get $out) (i32.shl (local.get $count) (i32.const 2))))
    (local.set $stride (i32.shl (local.get $step) (i32.const 2)))
    (block $done
      (br_if $done (i32.ge_u (local.get $out) (local.get $end)))
      (loop $output
        (local.set $acc (f64.const 0))
        (local.set $p (local.get $x))
        (local.set $t (local.get $taps))
        (local.set $j (local.get $tapCount))
        (block $summed
          (br_if $summed (i32.eqz (local.get $j)))
          (loop $tap
            (local.set $acc
              (f64.add (local.get $acc)
                (f64.mul (f64.load (local.get $t)) (f64.promote_f32 (f32.load (local.get $p))))))
            (local.set $t (i32.add (local.get $t) (i32.const 8)))
            (local.set $p (i32.sub (local.get $p) (i32.const 4)))
            (local.set $j (i32.sub (local.get $j) (i32.const 1)))
            (br_if $tap (local.get $j))))
        (f32.store (local.get $out) (f32.demote_f64 (local.get $acc)))
        (local.set $x (i32.add (local.get $x) (local.get $stride)))
        (local.set $out (i32.add (local.get $out) (i32.const 4)))
        (br_if $output (i32.lt_u (local.get $out) (local.get $end)))))))
