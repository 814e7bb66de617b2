;; WebAssembly kernels of fft.js's two forward transforms (the npm package fft.js 4.0.4, pinned in
;; shared/package.json; loaded by fftJsKernels.ts; rebuild fftJsKernels.generated.ts with
;; `node --import tsx scripts/generate-wasm-kernels.ts`). The fingerprint's pair spectra and the fine spectrum
;; run a few dozen transforms a file, too few for V8 to optimise fft.js's JavaScript before a short file is
;; done (issue #22). Each function is fft.js's own code with inv = 0 (a forward transform): the same IEEE
;; double operations in the same order, so the same bits (tests/shared/fftJsKernels.test.ts compares them
;; with fft.js itself). inv * x and -inv * x with inv = 1 are x and -x exactly, so they are written so.
;;
;; Arguments: out, data and table are byte offsets of f64 arrays, bitrev of an i32 array (fft.js's table,
;; _bitrev), size is fft.js's _csize (twice the points) and width its _width. Indices below count f64
;; elements as fft.js's do; an address is base + 8 * index. The windowing functions do fft.ts's loops
;; (a float32 sample times its f64 window value, one IEEE multiplication, as JavaScript does it).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; windowReal(frame, window, n, out): out[i] = frame[i] * window[i], frame float32, window and out f64.
  (func (export "windowReal") (param $frame i32) (param $window i32) (param $n i32) (param $out i32)
    (local $i i32)
    (block $done
      (loop $each
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (f64.store (i32.add (local.get $out) (i32.shl (local.get $i) (i32.const 3)))
          (f64.mul
            (f64.promote_f32 (f32.load (i32.add (local.get $frame) (i32.shl (local.get $i) (i32.const 2)))))
            (f64.load (i32.add (local.get $window) (i32.shl (local.get $i) (i32.const 3))))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each))))

  ;; windowPair(a, b, window, n, out): out[2i] = a[i] * window[i], out[2i + 1] = b[i] * window[i] (a, b float32).
  (func (export "windowPair") (param $a i32) (param $b i32) (param $window i32) (param $n i32) (param $out i32)
    (local $i i32) (local $w f64) (local $o i32)
    (block $done
      (loop $each
        (br_if $done (i32.ge_u (local.get $i) (local.get $n)))
        (local.set $w (f64.load (i32.add (local.get $window) (i32.shl (local.get $i) (i32.const 3)))))
        (local.set $o (i32.add (local.get $out) (i32.shl (local.get $i) (i32.const 4))))
        (f64.store (local.get $o)
          (f64.mul (f64.promote_f32 (f32.load (i32.add (local.get $a) (i32.shl (local.get $i) (i32.const 2))))) (local.get $w)))
        (f64.store offset=8 (local.get $o)
          (f64.mul (f64.promote_f32 (f32.load (i32.add (local.get $b) (i32.shl (local.get $i) (i32.const 2))))) (local.get $w)))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $each))))

  ;; transform(out, data, table, bitrev, size, width): fft.js's transform(out, data), data interleaved complex.
  (func (export "transform")
    (param $out i32) (param $data i32) (param $table i32) (param $bitrev i32) (param $size i32) (param $width i32)
    (local $step i32) (local $len i32) (local $outOff i32) (local $t i32) (local $p i32) (local $o i32)
    (local $quarterLen i32) (local $limit i32) (local $i i32) (local $k i32)
    (local $A i32) (local $B i32) (local $C i32) (local $D i32) (local $tb i32)
    (local $Ar f64) (local $Ai f64) (local $Br f64) (local $Bi f64) (local $Cr f64) (local $Ci f64) (local $Dr f64) (local $Di f64)
    (local $tr f64) (local $ti f64)
    (local $MBr f64) (local $MBi f64) (local $MCr f64) (local $MCi f64) (local $MDr f64) (local $MDi f64)
    (local $T0r f64) (local $T0i f64) (local $T1r f64) (local $T1i f64) (local $T2r f64) (local $T2i f64) (local $T3r f64) (local $T3i f64)
    (local.set $step (i32.shl (i32.const 1) (local.get $width)))
    (local.set $len (i32.shl (i32.div_u (local.get $size) (local.get $step)) (i32.const 1)))
    ;; Initial step (permute and transform): _singleTransform2 (len 4) or _singleTransform4 (len 8).
    (local.set $outOff (i32.const 0))
    (local.set $t (i32.const 0))
    (block $firstDone
      (loop $first
        (br_if $firstDone (i32.ge_u (local.get $outOff) (local.get $size)))
        ;; p = &data[bitrev[t]], o = &out[outOff]
        (local.set $p (i32.add (local.get $data)
          (i32.shl (i32.load (i32.add (local.get $bitrev) (i32.shl (local.get $t) (i32.const 2)))) (i32.const 3))))
        (local.set $o (i32.add (local.get $out) (i32.shl (local.get $outOff) (i32.const 3))))
        (if (i32.eq (local.get $len) (i32.const 4))
          (then
            ;; evenR, evenI = data[off], data[off + 1]; oddR, oddI = data[off + step], data[off + step + 1]
            (local.set $Ar (f64.load (local.get $p)))
            (local.set $Ai (f64.load offset=8 (local.get $p)))
            (local.set $Br (f64.load (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 3)))))
            (local.set $Bi (f64.load offset=8 (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 3)))))
            (f64.store (local.get $o) (f64.add (local.get $Ar) (local.get $Br)))
            (f64.store offset=8 (local.get $o) (f64.add (local.get $Ai) (local.get $Bi)))
            (f64.store offset=16 (local.get $o) (f64.sub (local.get $Ar) (local.get $Br)))
            (f64.store offset=24 (local.get $o) (f64.sub (local.get $Ai) (local.get $Bi))))
          (else
            (local.set $Ar (f64.load (local.get $p)))
            (local.set $Ai (f64.load offset=8 (local.get $p)))
            (local.set $Br (f64.load (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 3)))))
            (local.set $Bi (f64.load offset=8 (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 3)))))
            (local.set $Cr (f64.load (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 4)))))
            (local.set $Ci (f64.load offset=8 (i32.add (local.get $p) (i32.shl (local.get $step) (i32.const 4)))))
            (local.set $Dr (f64.load (i32.add (local.get $p) (i32.mul (local.get $step) (i32.const 24)))))
            (local.set $Di (f64.load offset=8 (i32.add (local.get $p) (i32.mul (local.get $step) (i32.const 24)))))
            (local.set $T0r (f64.add (local.get $Ar) (local.get $Cr)))
            (local.set $T0i (f64.add (local.get $Ai) (local.get $Ci)))
            (local.set $T1r (f64.sub (local.get $Ar) (local.get $Cr)))
            (local.set $T1i (f64.sub (local.get $Ai) (local.get $Ci)))
            (local.set $T2r (f64.add (local.get $Br) (local.get $Dr)))
            (local.set $T2i (f64.add (local.get $Bi) (local.get $Di)))
            (local.set $T3r (f64.sub (local.get $Br) (local.get $Dr)))
            (local.set $T3i (f64.sub (local.get $Bi) (local.get $Di)))
            ;; FA, FB, FC, FD
            (f64.store (local.get $o) (f64.add (local.get $T0r) (local.get $T2r)))
            (f64.store offset=8 (local.get $o) (f64.add (local.get $T0i) (local.get $T2i)))
            (f64.store offset=16 (local.get $o) (f64.add (local.get $T1r) (local.get $T3i)))
            (f64.store offset=24 (local.get $o) (f64.sub (local.get $T1i) (local.get $T3r)))
            (f64.store offset=32 (local.get $o) (f64.sub (local.get $T0r) (local.get $T2r)))
            (f64.store offset=40 (local.get $o) (f64.sub (local.get $T0i) (local.get $T2i)))
            (f64.store offset=48 (local.get $o) (f64.sub (local.get $T1r) (local.get $T3i)))
            (f64.store offset=56 (local.get $o) (f64.add (local.get $T1i) (local.get $T3r)))))
        (local.set $outOff (i32.add (local.get $outOff) (local.get $len)))
        (local.set $t (i32.add (local.get $t) (i32.const 1)))
        (br $first)))
    ;; Steps in decreasing order.
    (local.set $step (i32.shr_u (local.get $step) (i32.const 2)))
    (block $stepsDone
      (loop $steps
        (br_if $stepsDone (i32.lt_s (local.get $step) (i32.const 2)))
        (local.set $len (i32.shl (i32.div_u (local.get $size) (local.get $step)) (i32.const 1)))
        (local.set $quarterLen (i32.shr_u (local.get $len) (i32.const 2)))
        (local.set $outOff (i32.const 0))
        (block $offsDone
          (loop $offs
            (br_if $offsDone (i32.ge_u (local.get $outOff) (local.get $size)))
            (local.set $limit (i32.add (local.get $outOff) (local.get $quarterLen)))
            (local.set $i (local.get $outOff))
            (local.set $k (i32.const 0))
            (block $butterfliesDone
              (loop $butterflies
                (br_if $butterfliesDone (i32.ge_u (local.get $i) (local.get $limit)))
                (local.set $A (i32.add (local.get $out) (i32.shl (local.get $i) (i32.const 3))))
                (local.set $B (i32.add (local.get $A) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $C (i32.add (local.get $B) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $D (i32.add (local.get $C) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $Ar (f64.load (local.get $A)))
                (local.set $Ai (f64.load offset=8 (local.get $A)))
                (local.set $Br (f64.load (local.get $B)))
                (local.set $Bi (f64.load offset=8 (local.get $B)))
                (local.set $Cr (f64.load (local.get $C)))
                (local.set $Ci (f64.load offset=8 (local.get $C)))
                (local.set $Dr (f64.load (local.get $D)))
                (local.set $Di (f64.load offset=8 (local.get $D)))
                ;; table[k], table[k + 1]
                (local.set $tb (i32.add (local.get $table) (i32.shl (local.get $k) (i32.const 3))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MBr (f64.sub (f64.mul (local.get $Br) (local.get $tr)) (f64.mul (local.get $Bi) (local.get $ti))))
                (local.set $MBi (f64.add (f64.mul (local.get $Br) (local.get $ti)) (f64.mul (local.get $Bi) (local.get $tr))))
                ;; table[2k], table[2k + 1]
                (local.set $tb (i32.add (local.get $table) (i32.shl (local.get $k) (i32.const 4))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MCr (f64.sub (f64.mul (local.get $Cr) (local.get $tr)) (f64.mul (local.get $Ci) (local.get $ti))))
                (local.set $MCi (f64.add (f64.mul (local.get $Cr) (local.get $ti)) (f64.mul (local.get $Ci) (local.get $tr))))
                ;; table[3k], table[3k + 1]
                (local.set $tb (i32.add (local.get $table) (i32.mul (local.get $k) (i32.const 24))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MDr (f64.sub (f64.mul (local.get $Dr) (local.get $tr)) (f64.mul (local.get $Di) (local.get $ti))))
                (local.set $MDi (f64.add (f64.mul (local.get $Dr) (local.get $ti)) (f64.mul (local.get $Di) (local.get $tr))))
                (local.set $T0r (f64.add (local.get $Ar) (local.get $MCr)))
                (local.set $T0i (f64.add (local.get $Ai) (local.get $MCi)))
                (local.set $T1r (f64.sub (local.get $Ar) (local.get $MCr)))
                (local.set $T1i (f64.sub (local.get $Ai) (local.get $MCi)))
                (local.set $T2r (f64.add (local.get $MBr) (local.get $MDr)))
                (local.set $T2i (f64.add (local.get $MBi) (local.get $MDi)))
                (local.set $T3r (f64.sub (local.get $MBr) (local.get $MDr)))
                (local.set $T3i (f64.sub (local.get $MBi) (local.get $MDi)))
                (f64.store (local.get $A) (f64.add (local.get $T0r) (local.get $T2r)))
                (f64.store offset=8 (local.get $A) (f64.add (local.get $T0i) (local.get $T2i)))
                (f64.store (local.get $B) (f64.add (local.get $T1r) (local.get $T3i)))
                (f64.store offset=8 (local.get $B) (f64.sub (local.get $T1i) (local.get $T3r)))
                (f64.store (local.get $C) (f64.sub (local.get $T0r) (local.get $T2r)))
                (f64.store offset=8 (local.get $C) (f64.sub (local.get $T0i) (local.get $T2i)))
                (f64.store (local.get $D) (f64.sub (local.get $T1r) (local.get $T3i)))
                (f64.store offset=8 (local.get $D) (f64.add (local.get $T1i) (local.get $T3r)))
                (local.set $i (i32.add (local.get $i) (i32.const 2)))
                (local.set $k (i32.add (local.get $k) (local.get $step)))
                (br $butterflies)))
            (local.set $outOff (i32.add (local.get $outOff) (local.get $len)))
            (br $offs)))
        (local.set $step (i32.shr_u (local.get $step) (i32.const 2)))
        (br $steps))))

  ;; realTransform(out, data, table, bitrev, size, width): fft.js's realTransform(out, data), data real
  ;; (size / 2 values). Like fft.js it fills the left half of the spectrum.
  (func (export "realTransform")
    (param $out i32) (param $data i32) (param $table i32) (param $bitrev i32) (param $size i32) (param $width i32)
    (local $step i32) (local $len i32) (local $outOff i32) (local $t i32) (local $p i32) (local $o i32) (local $s i32)
    (local $halfLen i32) (local $quarterLen i32) (local $hquarterLen i32) (local $i i32) (local $k i32)
    (local $A i32) (local $B i32) (local $C i32) (local $D i32) (local $tb i32) (local $SA i32) (local $SB i32)
    (local $Ar f64) (local $Ai f64) (local $Br f64) (local $Bi f64) (local $Cr f64) (local $Ci f64) (local $Dr f64) (local $Di f64)
    (local $tr f64) (local $ti f64)
    (local $MBr f64) (local $MBi f64) (local $MCr f64) (local $MCi f64) (local $MDr f64) (local $MDi f64)
    (local $T0r f64) (local $T0i f64) (local $T1r f64) (local $T1i f64) (local $T2r f64) (local $T2i f64) (local $T3r f64) (local $T3i f64)
    (local.set $step (i32.shl (i32.const 1) (local.get $width)))
    (local.set $len (i32.shl (i32.div_u (local.get $size) (local.get $step)) (i32.const 1)))
    ;; Initial step: _singleRealTransform2 / _singleRealTransform4 (outOff, off >>> 1, step >>> 1).
    (local.set $s (i32.shl (i32.shr_u (local.get $step) (i32.const 1)) (i32.const 3)))
    (local.set $outOff (i32.const 0))
    (local.set $t (i32.const 0))
    (block $firstDone
      (loop $first
        (br_if $firstDone (i32.ge_u (local.get $outOff) (local.get $size)))
        (local.set $p (i32.add (local.get $data)
          (i32.shl (i32.shr_u (i32.load (i32.add (local.get $bitrev) (i32.shl (local.get $t) (i32.const 2)))) (i32.const 1)) (i32.const 3))))
        (local.set $o (i32.add (local.get $out) (i32.shl (local.get $outOff) (i32.const 3))))
        (if (i32.eq (local.get $len) (i32.const 4))
          (then
            (local.set $Ar (f64.load (local.get $p)))
            (local.set $Br (f64.load (i32.add (local.get $p) (local.get $s))))
            (f64.store (local.get $o) (f64.add (local.get $Ar) (local.get $Br)))
            (f64.store offset=8 (local.get $o) (f64.const 0))
            (f64.store offset=16 (local.get $o) (f64.sub (local.get $Ar) (local.get $Br)))
            (f64.store offset=24 (local.get $o) (f64.const 0)))
          (else
            (local.set $Ar (f64.load (local.get $p)))
            (local.set $Br (f64.load (i32.add (local.get $p) (local.get $s))))
            (local.set $Cr (f64.load (i32.add (local.get $p) (i32.shl (local.get $s) (i32.const 1)))))
            (local.set $Dr (f64.load (i32.add (local.get $p) (i32.mul (local.get $s) (i32.const 3)))))
            (local.set $T0r (f64.add (local.get $Ar) (local.get $Cr)))
            (local.set $T1r (f64.sub (local.get $Ar) (local.get $Cr)))
            (local.set $T2r (f64.add (local.get $Br) (local.get $Dr)))
            (local.set $T3r (f64.sub (local.get $Br) (local.get $Dr)))
            ;; FAr, 0, FBr = T1r, FBi = -T3r, FCr, 0, FDr = T1r, FDi = T3r
            (f64.store (local.get $o) (f64.add (local.get $T0r) (local.get $T2r)))
            (f64.store offset=8 (local.get $o) (f64.const 0))
            (f64.store offset=16 (local.get $o) (local.get $T1r))
            (f64.store offset=24 (local.get $o) (f64.neg (local.get $T3r)))
            (f64.store offset=32 (local.get $o) (f64.sub (local.get $T0r) (local.get $T2r)))
            (f64.store offset=40 (local.get $o) (f64.const 0))
            (f64.store offset=48 (local.get $o) (local.get $T1r))
            (f64.store offset=56 (local.get $o) (local.get $T3r))))
        (local.set $outOff (i32.add (local.get $outOff) (local.get $len)))
        (local.set $t (i32.add (local.get $t) (i32.const 1)))
        (br $first)))
    (local.set $step (i32.shr_u (local.get $step) (i32.const 2)))
    (block $stepsDone
      (loop $steps
        (br_if $stepsDone (i32.lt_s (local.get $step) (i32.const 2)))
        (local.set $len (i32.shl (i32.div_u (local.get $size) (local.get $step)) (i32.const 1)))
        (local.set $halfLen (i32.shr_u (local.get $len) (i32.const 1)))
        (local.set $quarterLen (i32.shr_u (local.get $halfLen) (i32.const 1)))
        (local.set $hquarterLen (i32.shr_u (local.get $quarterLen) (i32.const 1)))
        (local.set $outOff (i32.const 0))
        (block $offsDone
          (loop $offs
            (br_if $offsDone (i32.ge_u (local.get $outOff) (local.get $size)))
            (local.set $i (i32.const 0))
            (local.set $k (i32.const 0))
            (block $butterfliesDone
              (loop $butterflies
                (br_if $butterfliesDone (i32.gt_u (local.get $i) (local.get $hquarterLen)))
                (local.set $A (i32.add (local.get $out) (i32.shl (i32.add (local.get $outOff) (local.get $i)) (i32.const 3))))
                (local.set $B (i32.add (local.get $A) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $C (i32.add (local.get $B) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $D (i32.add (local.get $C) (i32.shl (local.get $quarterLen) (i32.const 3))))
                (local.set $Ar (f64.load (local.get $A)))
                (local.set $Ai (f64.load offset=8 (local.get $A)))
                (local.set $Br (f64.load (local.get $B)))
                (local.set $Bi (f64.load offset=8 (local.get $B)))
                (local.set $Cr (f64.load (local.get $C)))
                (local.set $Ci (f64.load offset=8 (local.get $C)))
                (local.set $Dr (f64.load (local.get $D)))
                (local.set $Di (f64.load offset=8 (local.get $D)))
                (local.set $tb (i32.add (local.get $table) (i32.shl (local.get $k) (i32.const 3))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MBr (f64.sub (f64.mul (local.get $Br) (local.get $tr)) (f64.mul (local.get $Bi) (local.get $ti))))
                (local.set $MBi (f64.add (f64.mul (local.get $Br) (local.get $ti)) (f64.mul (local.get $Bi) (local.get $tr))))
                (local.set $tb (i32.add (local.get $table) (i32.shl (local.get $k) (i32.const 4))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MCr (f64.sub (f64.mul (local.get $Cr) (local.get $tr)) (f64.mul (local.get $Ci) (local.get $ti))))
                (local.set $MCi (f64.add (f64.mul (local.get $Cr) (local.get $ti)) (f64.mul (local.get $Ci) (local.get $tr))))
                (local.set $tb (i32.add (local.get $table) (i32.mul (local.get $k) (i32.const 24))))
                (local.set $tr (f64.load (local.get $tb)))
                (local.set $ti (f64.load offset=8 (local.get $tb)))
                (local.set $MDr (f64.sub (f64.mul (local.get $Dr) (local.get $tr)) (f64.mul (local.get $Di) (local.get $ti))))
                (local.set $MDi (f64.add (f64.mul (local.get $Dr) (local.get $ti)) (f64.mul (local.get $Di) (local.get $tr))))
                (local.set $T0r (f64.add (local.get $Ar) (local.get $MCr)))
                (local.set $T0i (f64.add (local.get $Ai) (local.get $MCi)))
                (local.set $T1r (f64.sub (local.get $Ar) (local.get $MCr)))
                (local.set $T1i (f64.sub (local.get $Ai) (local.get $MCi)))
                (local.set $T2r (f64.add (local.get $MBr) (local.get $MDr)))
                (local.set $T2i (f64.add (local.get $MBi) (local.get $MDi)))
                (local.set $T3r (f64.sub (local.get $MBr) (local.get $MDr)))
                (local.set $T3i (f64.sub (local.get $MBi) (local.get $MDi)))
                ;; FA, FB
                (f64.store (local.get $A) (f64.add (local.get $T0r) (local.get $T2r)))
                (f64.store offset=8 (local.get $A) (f64.add (local.get $T0i) (local.get $T2i)))
                (f64.store (local.get $B) (f64.add (local.get $T1r) (local.get $T3i)))
                (f64.store offset=8 (local.get $B) (f64.sub (local.get $T1i) (local.get $T3r)))
                (if (i32.eqz (local.get $i))
                  (then
                    ;; The final middle point FC.
                    (f64.store (local.get $C) (f64.sub (local.get $T0r) (local.get $T2r)))
                    (f64.store offset=8 (local.get $C) (f64.sub (local.get $T0i) (local.get $T2i))))
                  (else
                    (if (i32.ne (local.get $i) (local.get $hquarterLen))
                      (then
                        ;; The flipped case: ST0 = (T1r, -T1i), ST1 = (T0r, -T0i), ST2 = (-T3i, -T3r), ST3 = (-T2i, -T2r);
                        ;; SFA = ST0 + ST2 at SA = outOff + quarterLen - i, SFB = (ST1r + ST3i, ST1i - ST3r) at SB = outOff + halfLen - i.
                        (local.set $SA (i32.add (local.get $out) (i32.shl (i32.sub (i32.add (local.get $outOff) (local.get $quarterLen)) (local.get $i)) (i32.const 3))))
                        (local.set $SB (i32.add (local.get $out) (i32.shl (i32.sub (i32.add (local.get $outOff) (local.get $halfLen)) (local.get $i)) (i32.const 3))))
                        (f64.store (local.get $SA) (f64.add (local.get $T1r) (f64.neg (local.get $T3i))))
                        (f64.store offset=8 (local.get $SA) (f64.add (f64.neg (local.get $T1i)) (f64.neg (local.get $T3r))))
                        (f64.store (local.get $SB) (f64.add (local.get $T0r) (f64.neg (local.get $T2r))))
                        (f64.store offset=8 (local.get $SB) (f64.sub (f64.neg (local.get $T0i)) (f64.neg (local.get $T2i))))))))
                (local.set $i (i32.add (local.get $i) (i32.const 2)))
                (local.set $k (i32.add (local.get $k) (local.get $step)))
                (br $butterflies)))
            (local.set $outOff (i32.add (local.get $outOff) (local.get $len)))
            (br $offs)))
        (local.set $step (i32.shr_u (local.get $step) (i32.const 2)))
        (br $steps)))))
