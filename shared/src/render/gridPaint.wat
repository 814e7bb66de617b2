;; WebAssembly kernel painting a spectrogram plot through the colour map (loaded by gridPaint.ts; rebuild
;; gridPaint.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). It runs once per image
;; over about 10^6 pixels, where V8 would run most of the JavaScript loop unoptimised (issue #22's one-file
;; scan). Every operation is the JavaScript's own (IEEE double, in the same order), so the bytes are the same
;; (tests/shared/gridPaint.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts).
  (import "env" "memory" (memory 1))

  ;; paint(db, cellOf, rowOf, width, height, rgba, lut, minDb, indexPerDb, top, noData): the plot's pixels.
  ;; db: float32 cells; cellOf: int32 per pixel column (first cell of its grid column); rowOf: int32 per pixel
  ;; row (grid row); rgba: width*height pixels, of which R, G and B are written (alpha left as it is); lut:
  ;; 3 bytes a colour index 0...top; noData: 0xBBGGRR for a cell without data (NaN).
  ;; A pixel's index is min(top, max(0, floor((v - minDb)*indexPerDb + 1/2))), as spectrogramImage.ts computes it.
  (func (export "paint")
    (param $db i32) (param $cellOf i32) (param $rowOf i32) (param $width i32) (param $height i32)
    (param $rgba i32) (param $lut i32) (param $minDb f64) (param $indexPerDb f64) (param $top i32) (param $noData i32)
    (local $y i32) (local $x i32) (local $row i32) (local $px i32) (local $v f64) (local $t f64) (local $e i32)
    (local $topF f64)
    (local.set $topF (f64.convert_i32_s (local.get $top)))
    (local.set $px (local.get $rgba))
    (block $rows
      (loop $eachRow
        (br_if $rows (i32.ge_u (local.get $y) (local.get $height)))
        (local.set $row (i32.load (i32.add (local.get $rowOf) (i32.shl (local.get $y) (i32.const 2)))))
        (local.set $x (i32.const 0))
        (block $cols
          (loop $eachCol
            (br_if $cols (i32.ge_u (local.get $x) (local.get $width)))
            (local.set $v
              (f64.promote_f32
                (f32.load
                  (i32.add (local.get $db)
                    (i32.shl
                      (i32.add (i32.load (i32.add (local.get $cellOf) (i32.shl (local.get $x) (i32.const 2)))) (local.get $row))
                      (i32.const 2))))))
            (if (f64.ne (local.get $v) (local.get $v))
              (then
                (i32.store16 (local.get $px) (local.get $noData))
                (i32.store8 offset=2 (local.get $px) (i32.shr_u (local.get $noData) (i32.const 16))))
              (else
                (local.set $t (f64.add (f64.mul (f64.sub (local.get $v) (local.get $minDb)) (local.get $indexPerDb)) (f64.const 0.5)))
                (local.set $e
                  (if (result i32) (f64.lt (local.get $t) (f64.const 1))
                    (then (i32.const 0))
                    (else
                      (if (result i32) (f64.ge (local.get $t) (local.get $topF))
                        (then (local.get $top))
                        (else (i32.trunc_f64_s (local.get $t)))))))
                (local.set $e (i32.add (local.get $lut) (i32.mul (local.get $e) (i32.const 3))))
                (i32.store16 (local.get $px) (i32.load16_u (local.get $e)))
                (i32.store8 offset=2 (local.get $px) (i32.load8_u offset=2 (local.get $e)))))
            (local.set $px (i32.add (local.get $px) (i32.const 4)))
            (local.set $x (i32.add (local.get $x) (i32.const 1)))
            (br $eachCol)))
        (local.set $y (i32.add (local.get $y) (i32.const 1)))
        (br $eachRow))))
  ;; fillRows(rgba, stride, x0, x1, y0, y1, colour): raster.ts's fillRect at full opacity: R, G and B of pixels
  ;; [x0, x1) x [y0, y1) of the image at rgba (stride bytes a row) set to colour 0xBBGGRR, alpha as it is.
  (func (export "fillRows") (param $rgba i32) (param $stride i32) (param $x0 i32) (param $x1 i32) (param $y0 i32) (param $y1 i32) (param $colour i32)
    (local $y i32) (local $p i32) (local $end i32)
    (local.set $y (local.get $y0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_s (local.get $y) (local.get $y1)))
        (local.set $p (i32.add (i32.add (local.get $rgba) (i32.mul (local.get $y) (local.get $stride))) (i32.shl (local.get $x0) (i32.const 2))))
        (local.set $end (i32.add (i32.add (local.get $rgba) (i32.mul (local.get $y) (local.get $stride))) (i32.shl (local.get $x1) (i32.const 2))))
        (block $pixelsDone
          (loop $pixels
            (br_if $pixelsDone (i32.ge_u (local.get $p) (local.get $end)))
            (i32.store8 (local.get $p) (local.get $colour))
            (i32.store8 offset=1 (local.get $p) (i32.shr_u (local.get $colour) (i32.const 8)))
            (i32.store8 offset=2 (local.get $p) (i32.shr_u (local.get $colour) (i32.const 16)))
            (local.set $p (i32.add (local.get $p) (i32.const 4)))
            (br $pixels)))
        (local.set $y (i32.add (local.get $y) (i32.const 1)))
        (br $rows))))

  ;; blendRows(rgba, stride, x0, x1, y0, y1, colour, alpha): raster.ts's fillRect with alpha < 1: each of R, G,
  ;; B becomes Math.round(d + (c - d) * alpha) (JavaScript's rounding: ceil(v), less one when that exceeds v
  ;; by more than 1/2, so halves go up), the same double operations.
  (func $mix (param $d i32) (param $c i32) (param $alpha f64) (result i32)
    (local $v f64) (local $r f64)
    (local.set $v (f64.add (f64.convert_i32_s (local.get $d)) (f64.mul (f64.convert_i32_s (i32.sub (local.get $c) (local.get $d))) (local.get $alpha))))
    (local.set $r (f64.ceil (local.get $v)))
    (if (f64.gt (f64.sub (local.get $r) (f64.const 0.5)) (local.get $v)) (then (local.set $r (f64.sub (local.get $r) (f64.const 1)))))
    (i32.trunc_sat_f64_s (local.get $r)))
  (func (export "blendRows") (param $rgba i32) (param $stride i32) (param $x0 i32) (param $x1 i32) (param $y0 i32) (param $y1 i32) (param $colour i32) (param $alpha f64)
    (local $y i32) (local $p i32) (local $end i32) (local $r i32) (local $g i32) (local $b i32)
    (local.set $r (i32.and (local.get $colour) (i32.const 255)))
    (local.set $g (i32.and (i32.shr_u (local.get $colour) (i32.const 8)) (i32.const 255)))
    (local.set $b (i32.and (i32.shr_u (local.get $colour) (i32.const 16)) (i32.const 255)))
    (local.set $y (local.get $y0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_s (local.get $y) (local.get $y1)))
        (local.set $p (i32.add (i32.add (local.get $rgba) (i32.mul (local.get $y) (local.get $stride))) (i32.shl (local.get $x0) (i32.const 2))))
        (local.set $end (i32.add (i32.add (local.get $rgba) (i32.mul (local.get $y) (local.get $stride))) (i32.shl (local.get $x1) (i32.const 2))))
        (block $pixelsDone
          (loop $pixels
            (br_if $pixelsDone (i32.ge_u (local.get $p) (local.get $end)))
            (i32.store8 (local.get $p) (call $mix (i32.load8_u (local.get $p)) (local.get $r) (local.get $alpha)))
            (i32.store8 offset=1 (local.get $p) (call $mix (i32.load8_u offset=1 (local.get $p)) (local.get $g) (local.get $alpha)))
            (i32.store8 offset=2 (local.get $p) (call $mix (i32.load8_u offset=2 (local.get $p)) (local.get $b) (local.get $alpha)))
            (local.set $p (i32.add (local.get $p) (i32.const 4)))
            (br $pixels)))
        (local.set $y (i32.add (local.get $y) (i32.const 1)))
        (br $rows))))

  ;; blendMask(rgba, stride, left, top, mask, maskWidth, x0, x1, y0, y1, colour, k): text.ts's blendCoverage:
  ;; mask pixels [x0, x1) x [y0, y1) (bytes of coverage, maskWidth a row, at `mask`) over the image pixel at
  ;; (left + mx, top + my); a pixel of coverage c > 0 gets each of R, G, B as Math.round(d + (colour - d) * (c * k)),
  ;; k = alpha / 255 (the caller's double), with $mix's rounding.
  (func (export "blendMask") (param $rgba i32) (param $stride i32) (param $left i32) (param $top i32) (param $mask i32) (param $maskWidth i32)
    (param $x0 i32) (param $x1 i32) (param $y0 i32) (param $y1 i32) (param $colour i32) (param $k f64)
    (local $my i32) (local $mx i32) (local $p i32) (local $m i32) (local $c i32) (local $a f64) (local $r i32) (local $g i32) (local $b i32)
    (local.set $r (i32.and (local.get $colour) (i32.const 255)))
    (local.set $g (i32.and (i32.shr_u (local.get $colour) (i32.const 8)) (i32.const 255)))
    (local.set $b (i32.and (i32.shr_u (local.get $colour) (i32.const 16)) (i32.const 255)))
    (local.set $my (local.get $y0))
    (block $rowsDone
      (loop $rows
        (br_if $rowsDone (i32.ge_s (local.get $my) (local.get $y1)))
        (local.set $p (i32.add (local.get $rgba) (i32.add
          (i32.mul (i32.add (local.get $top) (local.get $my)) (local.get $stride))
          (i32.shl (i32.add (local.get $left) (local.get $x0)) (i32.const 2)))))
        (local.set $m (i32.add (local.get $mask) (i32.add (i32.mul (local.get $my) (local.get $maskWidth)) (local.get $x0))))
        (local.set $mx (local.get $x0))
        (block $pixelsDone
          (loop $pixels
            (br_if $pixelsDone (i32.ge_s (local.get $mx) (local.get $x1)))
            (local.set $c (i32.load8_u (local.get $m)))
            (if (local.get $c)
              (then
                (local.set $a (f64.mul (f64.convert_i32_s (local.get $c)) (local.get $k)))
                (i32.store8 (local.get $p) (call $mix (i32.load8_u (local.get $p)) (local.get $r) (local.get $a)))
                (i32.store8 offset=1 (local.get $p) (call $mix (i32.load8_u offset=1 (local.get $p)) (local.get $g) (local.get $a)))
                (i32.store8 offset=2 (local.get $p) (call $mix (i32.load8_u offset=2 (local.get $p)) (local.get $b) (local.get $a)))))
            (local.set $mx (i32.add (local.get $mx) (i32.const 1)))
            (local.set $p (i32.add (local.get $p) (i32.const 4)))
            (local.set $m (i32.add (local.get $m) (i32.const 1)))
            (br $pixels)))
        (local.set $my (i32.add (local.get $my) (i32.const 1)))
        (br $rows))))
)
