;; WebAssembly SIMD kernels of the STFT's Welch sums and frame spectra (loaded by spectrumKernels.ts for fft.ts; rebuild
;; spectrumKernels.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). A bin's real and
;; imaginary parts ride in the two f64 lanes of a v128. Every value is computed with exactly the IEEE
;; operations of fft.ts's addAmplitudeSquaredPffft, in the same order (WebAssembly has no fused multiply-add),
;; so the sums are bit-identical to the JavaScript path (tests/shared/fft.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts): growing a memory would detach
  ;; its buffer.
  (import "env" "memory" (memory 1))

  ;; addPower(h, sum, half, side, edge): adds the Hann-windowed amplitude² of one frame to sum[0 … half].
  ;; h: byte offset of PFFFT's ordered real spectrum of a 2·half-point frame, float32
  ;; [X₀, X_half, Re X₁, Im X₁, …, Re X_{half−1}, Im X_{half−1}], unwindowed; sum: byte offset of half + 1
  ;; f64. The window is applied as X_w[k] = ½X[k] − ¼(X[k−1] + X[k+1]) (fft.ts says why); side and edge
  ;; are the one-sided and the DC/Nyquist scales. half ≥ 4.
  (func (export "addPower") (param $h i32) (param $sum i32) (param $half i32) (param $side f64) (param $edge f64)
    (local $dc f64) (local $nyq f64) (local $w f64) (local $re f64) (local $im f64)
    (local $prev v128) (local $cur v128) (local $next v128) (local $v v128)
    (local $p i32) (local $s i32) (local $end i32) (local $q i32)
    (local.set $dc (f64.promote_f32 (f32.load offset=0 (local.get $h))))
    (local.set $nyq (f64.promote_f32 (f32.load offset=4 (local.get $h))))
    ;; k = 0: real; w0 = 0.5·dc − 0.5·Re X₁.
    (local.set $w
      (f64.sub
        (f64.mul (f64.const 0.5) (local.get $dc))
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=8 (local.get $h))))))
    (f64.store offset=0 (local.get $sum)
      (f64.add (f64.load offset=0 (local.get $sum)) (f64.mul (f64.mul (local.get $w) (local.get $w)) (local.get $edge))))
    ;; k = 1: its lower neighbour is DC (imaginary part 0).
    (local.set $re
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=8 (local.get $h))))
        (f64.mul (f64.const 0.25) (f64.add (local.get $dc) (f64.promote_f32 (f32.load offset=16 (local.get $h)))))))
    (local.set $im
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=12 (local.get $h))))
        (f64.mul (f64.const 0.25) (f64.promote_f32 (f32.load offset=20 (local.get $h))))))
    (f64.store offset=8 (local.get $sum)
      (f64.add (f64.load offset=8 (local.get $sum))
        (f64.mul (f64.add (f64.mul (local.get $re) (local.get $re)) (f64.mul (local.get $im) (local.get $im))) (local.get $side))))
    ;; k = 2 … half − 2: (Re, Im) of bins k − 1, k, k + 1 as f64x2, each loaded once.
    (local.set $prev (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 (local.get $h))))
    (local.set $cur (f64x2.promote_low_f32x4 (v128.load64_zero offset=16 (local.get $h))))
    (local.set $p (i32.add (local.get $h) (i32.const 24)))
    (local.set $s (i32.add (local.get $sum) (i32.const 16)))
    (local.set $end (i32.add (local.get $sum) (i32.shl (i32.sub (local.get $half) (i32.const 1)) (i32.const 3))))
    (block $done
      (br_if $done (i32.ge_u (local.get $s) (local.get $end)))
      (loop $bin
        (local.set $next (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $p))))
        ;; (re, im) = 0.5·X[k] − 0.25·(X[k−1] + X[k+1]), then their squares.
        (local.set $v
          (f64x2.sub
            (f64x2.mul (f64x2.splat (f64.const 0.5)) (local.get $cur))
            (f64x2.mul (f64x2.splat (f64.const 0.25)) (f64x2.add (local.get $prev) (local.get $next)))))
        (local.set $v (f64x2.mul (local.get $v) (local.get $v)))
        (f64.store (local.get $s)
          (f64.add (f64.load (local.get $s))
            (f64.mul (f64.add (f64x2.extract_lane 0 (local.get $v)) (f64x2.extract_lane 1 (local.get $v))) (local.get $side))))
        (local.set $prev (local.get $cur))
        (local.set $cur (local.get $next))
        (local.set $p (i32.add (local.get $p) (i32.const 8)))
        (local.set $s (i32.add (local.get $s) (i32.const 8)))
        (br_if $bin (i32.lt_u (local.get $s) (local.get $end)))))
    ;; k = half − 1: its upper neighbour is Nyquist (imaginary part 0). q: byte offset of Re X_{half−1}.
    (local.set $q (i32.add (local.get $h) (i32.shl (i32.sub (local.get $half) (i32.const 1)) (i32.const 3))))
    (local.set $re
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=0 (local.get $q))))
        (f64.mul (f64.const 0.25) (f64.add (f64.promote_f32 (f32.load offset=0 (i32.sub (local.get $q) (i32.const 8)))) (local.get $nyq)))))
    (local.set $im
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=4 (local.get $q))))
        (f64.mul (f64.const 0.25) (f64.promote_f32 (f32.load offset=0 (i32.sub (local.get $q) (i32.const 4)))))))
    (f64.store (local.get $end)
      (f64.add (f64.load (local.get $end))
        (f64.mul (f64.add (f64.mul (local.get $re) (local.get $re)) (f64.mul (local.get $im) (local.get $im))) (local.get $side))))
    ;; k = half: real; wN = 0.5·Nyquist − 0.5·Re X_{half−1}.
    (local.set $w
      (f64.sub
        (f64.mul (f64.const 0.5) (local.get $nyq))
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=0 (local.get $q))))))
    (f64.store offset=8 (local.get $end)
      (f64.add (f64.load offset=8 (local.get $end)) (f64.mul (f64.mul (local.get $w) (local.get $w)) (local.get $edge)))))

  ;; power(h, sum, half, side, edge): as addPower, but stores each value in sum[k] instead of adding it (the
  ;; values of fft.ts's amplitudeSquaredPffft).
  (func (export "power") (param $h i32) (param $sum i32) (param $half i32) (param $side f64) (param $edge f64)
    (local $dc f64) (local $nyq f64) (local $w f64) (local $re f64) (local $im f64)
    (local $prev v128) (local $cur v128) (local $next v128) (local $v v128)
    (local $p i32) (local $s i32) (local $end i32) (local $q i32)
    (local.set $dc (f64.promote_f32 (f32.load offset=0 (local.get $h))))
    (local.set $nyq (f64.promote_f32 (f32.load offset=4 (local.get $h))))
    ;; k = 0: real; w0 = 0.5·dc − 0.5·Re X₁.
    (local.set $w
      (f64.sub
        (f64.mul (f64.const 0.5) (local.get $dc))
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=8 (local.get $h))))))
    (f64.store offset=0 (local.get $sum) (f64.mul (f64.mul (local.get $w) (local.get $w)) (local.get $edge)))
    ;; k = 1: its lower neighbour is DC (imaginary part 0).
    (local.set $re
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=8 (local.get $h))))
        (f64.mul (f64.const 0.25) (f64.add (local.get $dc) (f64.promote_f32 (f32.load offset=16 (local.get $h)))))))
    (local.set $im
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=12 (local.get $h))))
        (f64.mul (f64.const 0.25) (f64.promote_f32 (f32.load offset=20 (local.get $h))))))
    (f64.store offset=8 (local.get $sum)
      (f64.mul (f64.add (f64.mul (local.get $re) (local.get $re)) (f64.mul (local.get $im) (local.get $im))) (local.get $side)))
    ;; k = 2 … half − 2: (Re, Im) of bins k − 1, k, k + 1 as f64x2, each loaded once.
    (local.set $prev (f64x2.promote_low_f32x4 (v128.load64_zero offset=8 (local.get $h))))
    (local.set $cur (f64x2.promote_low_f32x4 (v128.load64_zero offset=16 (local.get $h))))
    (local.set $p (i32.add (local.get $h) (i32.const 24)))
    (local.set $s (i32.add (local.get $sum) (i32.const 16)))
    (local.set $end (i32.add (local.get $sum) (i32.shl (i32.sub (local.get $half) (i32.const 1)) (i32.const 3))))
    (block $done
      (br_if $done (i32.ge_u (local.get $s) (local.get $end)))
      (loop $bin
        (local.set $next (f64x2.promote_low_f32x4 (v128.load64_zero (local.get $p))))
        ;; (re, im) = 0.5·X[k] − 0.25·(X[k−1] + X[k+1]), then their squares.
        (local.set $v
          (f64x2.sub
            (f64x2.mul (f64x2.splat (f64.const 0.5)) (local.get $cur))
            (f64x2.mul (f64x2.splat (f64.const 0.25)) (f64x2.add (local.get $prev) (local.get $next)))))
        (local.set $v (f64x2.mul (local.get $v) (local.get $v)))
        (f64.store (local.get $s)
          (f64.mul (f64.add (f64x2.extract_lane 0 (local.get $v)) (f64x2.extract_lane 1 (local.get $v))) (local.get $side)))
        (local.set $prev (local.get $cur))
        (local.set $cur (local.get $next))
        (local.set $p (i32.add (local.get $p) (i32.const 8)))
        (local.set $s (i32.add (local.get $s) (i32.const 8)))
        (br_if $bin (i32.lt_u (local.get $s) (local.get $end)))))
    ;; k = half − 1: its upper neighbour is Nyquist (imaginary part 0). q: byte offset of Re X_{half−1}.
    (local.set $q (i32.add (local.get $h) (i32.shl (i32.sub (local.get $half) (i32.const 1)) (i32.const 3))))
    (local.set $re
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=0 (local.get $q))))
        (f64.mul (f64.const 0.25) (f64.add (f64.promote_f32 (f32.load offset=0 (i32.sub (local.get $q) (i32.const 8)))) (local.get $nyq)))))
    (local.set $im
      (f64.sub
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=4 (local.get $q))))
        (f64.mul (f64.const 0.25) (f64.promote_f32 (f32.load offset=0 (i32.sub (local.get $q) (i32.const 4)))))))
    (f64.store (local.get $end)
      (f64.mul (f64.add (f64.mul (local.get $re) (local.get $re)) (f64.mul (local.get $im) (local.get $im))) (local.get $side)))
    ;; k = half: real; wN = 0.5·Nyquist − 0.5·Re X_{half−1}.
    (local.set $w
      (f64.sub
        (f64.mul (f64.const 0.5) (local.get $nyq))
        (f64.mul (f64.const 0.5) (f64.promote_f32 (f32.load offset=0 (local.get $q))))))
    (f64.store offset=8 (local.get $end) (f64.mul (f64.mul (local.get $w) (local.get $w)) (local.get $edge))))
  ;; accumulate(x, sum, mean, n, share): sum[k] += x[k] and mean[k] += x[k]*share for k in [0, n), all
  ;; f64 (a frame's amplitude-squared into its channel's Welch sum and the channel mean, as the
  ;; JavaScript of spectralAnalyser.ts does them).
  (func (export "accumulate") (param $x i32) (param $sum i32) (param $mean i32) (param $n i32) (param $share f64)
    (local $end i32) (local $v f64)
    (local.set $end (i32.add (local.get $x) (i32.shl (local.get $n) (i32.const 3))))
    (block $done
      (br_if $done (i32.ge_u (local.get $x) (local.get $end)))
      (loop $bin
        (local.set $v (f64.load (local.get $x)))
        (f64.store (local.get $sum) (f64.add (f64.load (local.get $sum)) (local.get $v)))
        (f64.store (local.get $mean) (f64.add (f64.load (local.get $mean)) (f64.mul (local.get $v) (local.get $share))))
        (local.set $x (i32.add (local.get $x) (i32.const 8)))
        (local.set $sum (i32.add (local.get $sum) (i32.const 8)))
        (local.set $mean (i32.add (local.get $mean) (i32.const 8)))
        (br_if $bin (i32.lt_u (local.get $x) (local.get $end)))))))
