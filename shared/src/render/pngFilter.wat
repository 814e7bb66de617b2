;; WebAssembly SIMD kernels of PNG scanline filtering (loaded by pngFilter.ts; rebuild pngFilter.generated.ts
;; with `node --import tsx scripts/generate-wasm-kernels.ts`). A PNG is encoded once per image, so its loops
;; never run long enough for V8 to optimise them: here they run compiled from the first byte (issue #22's
;; one-file scan). The caller hands them a few rows at a time: V8 runs a module's first calls in its baseline
;; compiler while it optimises the functions in the background, and a single call would never leave it. The bytes are those of pngFilter.ts's JavaScript loops (tests/shared/pngFilter.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; One pixel: RGBA at $s -> RGB at $d, composited over white where not opaque:
  ;; round((1 - a)*255 + a*v) with a = alpha / 255, rounding halves up as JavaScript's Math.round does.
  (func $pixel (param $s i32) (param $d i32)
    (local $alpha i32) (local $a f64) (local $k i32) (local $x f64) (local $r f64)
    (local.set $alpha (i32.load8_u offset=3 (local.get $s)))
    (if (i32.eq (local.get $alpha) (i32.const 255))
      (then
        (i32.store16 (local.get $d) (i32.load16_u (local.get $s)))
        (i32.store8 offset=2 (local.get $d) (i32.load8_u offset=2 (local.get $s)))
        (return)))
    (local.set $a (f64.div (f64.convert_i32_u (local.get $alpha)) (f64.const 255)))
    (loop $channel
      (local.set $x
        (f64.add
          (f64.mul (f64.sub (f64.const 1) (local.get $a)) (f64.const 255))
          (f64.mul (local.get $a) (f64.convert_i32_u (i32.load8_u (i32.add (local.get $s) (local.get $k)))))))
      (local.set $r (f64.floor (local.get $x)))
      (if (f64.ge (f64.sub (local.get $x) (local.get $r)) (f64.const 0.5))
        (then (local.set $r (f64.add (local.get $r) (f64.const 1)))))
      (i32.store8 (i32.add (local.get $d) (local.get $k)) (i32.trunc_f64_u (local.get $r)))
      (local.set $k (i32.add (local.get $k) (i32.const 1)))
      (br_if $channel (i32.lt_u (local.get $k) (i32.const 3)))))

  ;; rgb(src, pixels, dst): RGBA pixels at src -> RGB at dst. Four opaque pixels at a time are one shuffle;
  ;; the 16-byte store writes 4 bytes past them, so dst + 3*pixels + 4 must lie in memory.
  (func (export "rgb") (param $src i32) (param $pixels i32) (param $dst i32)
    (local $p i32) (local $v v128) (local $q i32)
    (block $quads
      (loop $quad
        (br_if $quads (i32.gt_u (i32.add (local.get $p) (i32.const 4)) (local.get $pixels)))
        (local.set $v (v128.load (i32.add (local.get $src) (i32.shl (local.get $p) (i32.const 2)))))
        (if (i32x4.all_true
              (i32x4.eq
                (v128.and (local.get $v) (v128.const i32x4 0xff000000 0xff000000 0xff000000 0xff000000))
                (v128.const i32x4 0xff000000 0xff000000 0xff000000 0xff000000)))
          (then
            (v128.store
              (i32.add (local.get $dst) (i32.mul (local.get $p) (i32.const 3)))
              (i8x16.shuffle 0 1 2 4 5 6 8 9 10 12 13 14 0 0 0 0 (local.get $v) (local.get $v))))
          (else
            (local.set $q (i32.const 0))
            (loop $one
              (call $pixel
                (i32.add (local.get $src) (i32.shl (i32.add (local.get $p) (local.get $q)) (i32.const 2)))
                (i32.add (local.get $dst) (i32.mul (i32.add (local.get $p) (local.get $q)) (i32.const 3))))
              (local.set $q (i32.add (local.get $q) (i32.const 1)))
              (br_if $one (i32.lt_u (local.get $q) (i32.const 4))))))
        (local.set $p (i32.add (local.get $p) (i32.const 4)))
        (br $quad)))
    (block $tail
      (loop $rest
        (br_if $tail (i32.ge_u (local.get $p) (local.get $pixels)))
        (call $pixel
          (i32.add (local.get $src) (i32.shl (local.get $p) (i32.const 2)))
          (i32.add (local.get $dst) (i32.mul (local.get $p) (i32.const 3))))
        (local.set $p (i32.add (local.get $p) (i32.const 1)))
        (br $rest))))

  ;; One byte of a row after the first, from its third byte on: x - Paeth(a left, b up, c up-left)
  ;; (ISO/IEC 15948:2004, 9.4: ties go to a, then b).
  (func $paethByte (param $row i32) (param $up i32) (param $out i32) (param $x i32)
    (local $a i32) (local $b i32) (local $c i32) (local $pa i32) (local $pb i32) (local $pc i32) (local $pred i32)
    (local.set $a (i32.load8_u (i32.sub (i32.add (local.get $row) (local.get $x)) (i32.const 3))))
    (local.set $b (i32.load8_u (i32.add (local.get $up) (local.get $x))))
    (local.set $c (i32.load8_u (i32.sub (i32.add (local.get $up) (local.get $x)) (i32.const 3))))
    (local.set $pa (i32.sub (local.get $b) (local.get $c)))
    (local.set $pb (i32.sub (local.get $a) (local.get $c)))
    (local.set $pc (i32.add (local.get $pa) (local.get $pb)))
    (local.set $pa (select (i32.sub (i32.const 0) (local.get $pa)) (local.get $pa) (i32.lt_s (local.get $pa) (i32.const 0))))
    (local.set $pb (select (i32.sub (i32.const 0) (local.get $pb)) (local.get $pb) (i32.lt_s (local.get $pb) (i32.const 0))))
    (local.set $pc (select (i32.sub (i32.const 0) (local.get $pc)) (local.get $pc) (i32.lt_s (local.get $pc) (i32.const 0))))
    (local.set $pred
      (select
        (local.get $a)
        (select (local.get $b) (local.get $c) (i32.le_s (local.get $pb) (local.get $pc)))
        (i32.and (i32.le_s (local.get $pa) (local.get $pb)) (i32.le_s (local.get $pa) (local.get $pc)))))
    (i32.store8 (i32.add (local.get $out) (local.get $x))
      (i32.sub (i32.load8_u (i32.add (local.get $row) (local.get $x))) (local.get $pred))))

  ;; The Paeth predictors of eight bytes (unsigned, widened to i16).
  (func $predict (param $a v128) (param $b v128) (param $c v128) (result v128)
    (local $pa v128) (local $pb v128) (local $pc v128)
    (local.set $pa (i16x8.sub (local.get $b) (local.get $c)))
    (local.set $pb (i16x8.sub (local.get $a) (local.get $c)))
    (local.set $pc (i16x8.abs (i16x8.add (local.get $pa) (local.get $pb))))
    (local.set $pa (i16x8.abs (local.get $pa)))
    (local.set $pb (i16x8.abs (local.get $pb)))
    (v128.bitselect
      (local.get $a)
      (v128.bitselect (local.get $b) (local.get $c) (i16x8.le_s (local.get $pb) (local.get $pc)))
      (v128.and (i16x8.le_s (local.get $pa) (local.get $pb)) (i16x8.le_s (local.get $pa) (local.get $pc)))))

  ;; paeth(src, rowBytes, y0, y1, dst): rows y0 to y1 - 1 of the RGB image at src (rowBytes each, 3 bytes a
  ;; pixel) as PNG filter type 4 then their bytes x - Paeth(left, up, up-left), bytes outside the image 0:
  ;; rowBytes + 1 bytes a row at dst.
  (func (export "paeth") (param $src i32) (param $rowBytes i32) (param $y0 i32) (param $y1 i32) (param $dst i32)
    (local $y i32) (local $row i32) (local $up i32) (local $out i32) (local $x i32) (local $first i32)
    (local $va v128) (local $vb v128) (local $vc v128) (local $lo v128) (local $hi v128)
    (local.set $first (select (local.get $rowBytes) (i32.const 3) (i32.lt_u (local.get $rowBytes) (i32.const 3))))
    (local.set $y (local.get $y0))
    (block $rows
      (loop $eachRow
        (br_if $rows (i32.ge_u (local.get $y) (local.get $y1)))
        (local.set $row (i32.add (local.get $src) (i32.mul (local.get $y) (local.get $rowBytes))))
        (local.set $up (i32.sub (local.get $row) (local.get $rowBytes)))
        (local.set $out (i32.add (i32.add (local.get $dst) (i32.mul (local.get $y) (i32.add (local.get $rowBytes) (i32.const 1)))) (i32.const 1)))
        (i32.store8 (i32.sub (local.get $out) (i32.const 1)) (i32.const 4))
        (local.set $x (i32.const 0))
        (if (i32.eqz (local.get $y))
          (then
            ;; No row above: Paeth predicts the left byte (0 before the first pixel).
            (block $d0
              (loop $l0
                (br_if $d0 (i32.ge_u (local.get $x) (local.get $first)))
                (i32.store8 (i32.add (local.get $out) (local.get $x)) (i32.load8_u (i32.add (local.get $row) (local.get $x))))
                (local.set $x (i32.add (local.get $x) (i32.const 1)))
                (br $l0)))
            (block $d1
              (loop $l1
                (br_if $d1 (i32.ge_u (local.get $x) (local.get $rowBytes)))
                (i32.store8 (i32.add (local.get $out) (local.get $x))
                  (i32.sub
                    (i32.load8_u (i32.add (local.get $row) (local.get $x)))
                    (i32.load8_u (i32.sub (i32.add (local.get $row) (local.get $x)) (i32.const 3)))))
                (local.set $x (i32.add (local.get $x) (i32.const 1)))
                (br $l1))))
          (else
            ;; The first pixel: nothing to the left, so Paeth predicts the byte above.
            (block $d2
              (loop $l2
                (br_if $d2 (i32.ge_u (local.get $x) (local.get $first)))
                (i32.store8 (i32.add (local.get $out) (local.get $x))
                  (i32.sub
                    (i32.load8_u (i32.add (local.get $row) (local.get $x)))
                    (i32.load8_u (i32.add (local.get $up) (local.get $x)))))
                (local.set $x (i32.add (local.get $x) (i32.const 1)))
                (br $l2)))
            (block $d3
              (loop $l3
                (br_if $d3 (i32.gt_u (i32.add (local.get $x) (i32.const 16)) (local.get $rowBytes)))
                (local.set $va (v128.load (i32.sub (i32.add (local.get $row) (local.get $x)) (i32.const 3))))
                (local.set $vb (v128.load (i32.add (local.get $up) (local.get $x))))
                (local.set $vc (v128.load (i32.sub (i32.add (local.get $up) (local.get $x)) (i32.const 3))))
                (local.set $lo
                  (call $predict
                    (i16x8.extend_low_i8x16_u (local.get $va))
                    (i16x8.extend_low_i8x16_u (local.get $vb))
                    (i16x8.extend_low_i8x16_u (local.get $vc))))
                (local.set $hi
                  (call $predict
                    (i16x8.extend_high_i8x16_u (local.get $va))
                    (i16x8.extend_high_i8x16_u (local.get $vb))
                    (i16x8.extend_high_i8x16_u (local.get $vc))))
                (v128.store (i32.add (local.get $out) (local.get $x))
                  (i8x16.sub
                    (v128.load (i32.add (local.get $row) (local.get $x)))
                    (i8x16.narrow_i16x8_u (local.get $lo) (local.get $hi))))
                (local.set $x (i32.add (local.get $x) (i32.const 16)))
                (br $l3)))
            (block $d4
              (loop $l4
                (br_if $d4 (i32.ge_u (local.get $x) (local.get $rowBytes)))
                (call $paethByte (local.get $row) (local.get $up) (local.get $out) (local.get $x))
                (local.set $x (i32.add (local.get $x) (i32.const 1)))
                (br $l4)))))
        (local.set $y (i32.add (local.get $y) (i32.const 1)))
        (br $eachRow)))))
