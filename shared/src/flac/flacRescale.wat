;; WebAssembly SIMD kernel of the FLAC reader's rescaling (loaded by flacRescale.ts; rebuild
;; flacRescale.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`). libFLAC hands out each
;; channel's codes as 32-bit integers (cli/src/audio/libflacFrames.ts); this writes them on the reader's scale
;; (2^-(bits-1)) as planar float32 and interleaves them little-endian in whole bytes for STREAMINFO's MD5
;; (RFC 9639, 8.2), four stereo frames a step. Each float is the code converted and times inverse (a power of
;; 2), the JavaScript loop's operations (cli/src/audio/flacStreamDecoder.ts, rescaleStereo), so the results
;; are bit for bit that loop's (tests/shared/flacRescale.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts): growing a memory would detach
  ;; its buffer.
  (import "env" "memory" (memory 1))

  ;; stereo(src, stride, n, left, right, md5, width, inverse): n frames (a multiple of 4) of two planar int32
  ;; channels at byte offsets src and src + 4*stride, into the float32 arrays at left and right and, `width`
  ;; (2 or 3) bytes a code, the interleaved MD5 input at md5 (any alignment).
  (func (export "stereo")
    (param $src i32) (param $stride i32) (param $n i32) (param $left i32) (param $right i32) (param $md5 i32)
    (param $width i32) (param $inverse f32)
    (local $srcR i32) (local $end i32) (local $vi v128) (local $l v128) (local $r v128) (local $t v128)
    (local.set $srcR (i32.add (local.get $src) (i32.shl (local.get $stride) (i32.const 2))))
    (local.set $end (i32.add (local.get $src) (i32.shl (local.get $n) (i32.const 2))))
    (local.set $vi (f32x4.splat (local.get $inverse)))
    (block $done
      (br_if $done (i32.ge_u (local.get $src) (local.get $end)))
      (loop $next
        (local.set $l (v128.load (local.get $src)))
        (local.set $r (v128.load (local.get $srcR)))
        (v128.store (local.get $left) (f32x4.mul (f32x4.convert_i32x4_s (local.get $l)) (local.get $vi)))
        (v128.store (local.get $right) (f32x4.mul (f32x4.convert_i32x4_s (local.get $r)) (local.get $vi)))
        (if (i32.eq (local.get $width) (i32.const 3))
          (then
            ;; L0 R0 L1 R1 L2 R2 L3 R3, three bytes each: 16 bytes, then 8.
            (v128.store (local.get $md5)
              (i8x16.shuffle 0 1 2 16 17 18 4 5 6 20 21 22 8 9 10 24 (local.get $l) (local.get $r)))
            (local.set $t (i8x16.shuffle 25 26 12 13 14 28 29 30 0 0 0 0 0 0 0 0 (local.get $l) (local.get $r)))
            (i64.store offset=16 (local.get $md5) (i64x2.extract_lane 0 (local.get $t)))
            (local.set $md5 (i32.add (local.get $md5) (i32.const 24))))
          (else
            ;; Two bytes each: 16 bytes.
            (v128.store (local.get $md5)
              (i8x16.shuffle 0 1 16 17 4 5 20 21 8 9 24 25 12 13 28 29 (local.get $l) (local.get $r)))
            (local.set $md5 (i32.add (local.get $md5) (i32.const 16)))))
        (local.set $src (i32.add (local.get $src) (i32.const 16)))
        (local.set $srcR (i32.add (local.get $srcR) (i32.const 16)))
        (local.set $left (i32.add (local.get $left) (i32.const 16)))
        (local.set $right (i32.add (local.get $right) (i32.const 16)))
        (br_if $next (i32.lt_u (local.get $src) (local.get $end))))))
)
