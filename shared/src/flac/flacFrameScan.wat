;; The FLAC framer's two per-byte loops in WebAssembly (loaded by flacFrameScan.ts; rebuild
;; flacFrameScan.generated.ts with `node --import tsx scripts/generate-wasm-kernels.ts`): the search for the
;; next frame sync code (RFC 9639, 9.1: 0xFF then 0xF8 or 0xF9), sixteen bytes a step with SIMD, and the frame
;; footer's CRC-16 (RFC 9639, 9.3: polynomial 0x8005, MSB first, initial 0), slice-by-16 as the JavaScript
;; crc16 in flacFramer.ts with the same table, which the caller writes at byte 0 (16 x 256 uint16, k-th table
;; at byte 512 k). Both give exactly the JavaScript results (tests/shared/flacFrameScan.test.ts).
(module
  ;; Made by the caller at its full size (shared/src/wasm/kernelModule.ts), with at least 32 bytes after the
  ;; last byte it searches: the search's vector loads read up to 17 bytes past `end` and ignore them.
  (import "env" "memory" (memory 1))

  ;; sync(from, end): the first q in [from, end) with byte q = 0xFF and either q + 1 = end (a sync code the
  ;; next bytes may complete) or byte q+1 & 0xFE = 0xF8; -1 when there is none.
  (func (export "sync") (param $from i32) (param $end i32) (result i32)
    (local $p i32) (local $last i32) (local $m i32) (local $ff v128) (local $fe v128) (local $f8 v128)
    (local.set $ff (i8x16.splat (i32.const 0xff)))
    (local.set $fe (i8x16.splat (i32.const 0xfe)))
    (local.set $f8 (i8x16.splat (i32.const 0xf8)))
    (local.set $p (local.get $from))
    (local.set $last (i32.sub (local.get $end) (i32.const 1)))
    (block $tail
      (loop $next
        (br_if $tail (i32.ge_s (local.get $p) (local.get $last)))
        ;; Lane i: byte p+i is 0xFF and byte p+i+1 is 0xF8 or 0xF9.
        (local.set $m (i8x16.bitmask (v128.and
          (i8x16.eq (v128.load (local.get $p)) (local.get $ff))
          (i8x16.eq (v128.and (v128.load offset=1 (local.get $p)) (local.get $fe)) (local.get $f8)))))
        (if (local.get $m)
          (then
            (local.set $m (i32.add (local.get $p) (i32.ctz (local.get $m))))
            ;; A lane at or past the last byte compared bytes after `end`: settled below instead.
            (br_if $tail (i32.ge_s (local.get $m) (local.get $last)))
            (return (local.get $m))))
        (local.set $p (i32.add (local.get $p) (i32.const 16)))
        (br $next)))
    (if (result i32)
      (i32.and (i32.ge_s (local.get $last) (local.get $from)) (i32.eq (i32.load8_u (local.get $last)) (i32.const 0xff)))
      (then (local.get $last))
      (else (i32.const -1))))

  ;; crc16(from, to, crc): the CRC-16 register after bytes [from, to), starting from `crc`.
  (func (export "crc16") (param $i i32) (param $to i32) (param $c i32) (result i32)
    (local $end16 i32) (local $a i64) (local $b i64)
    (local.set $end16 (i32.sub (local.get $to) (i32.const 15)))
    (block $done
      (loop $next
        (br_if $done (i32.ge_s (local.get $i) (local.get $end16)))
        ;; Sixteen bytes as two little-endian words: byte j of a word is bits 8j..8j+7.
        (local.set $a (i64.load (local.get $i)))
        (local.set $b (i64.load offset=8 (local.get $i)))
        (local.set $c
          (i32.xor
            (i32.xor
              (i32.xor
                (i32.xor
                  (i32.load16_u offset=7680 (i32.shl (i32.xor (i32.shr_u (local.get $c) (i32.const 8))
                    (i32.wrap_i64 (i64.and (local.get $a) (i64.const 0xff)))) (i32.const 1)))
                  (i32.load16_u offset=7168 (i32.shl (i32.xor (i32.and (local.get $c) (i32.const 0xff))
                    (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 8))) (i32.const 0xff))) (i32.const 1))))
                (i32.xor
                  (i32.load16_u offset=6656 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 15))) (i32.const 0x1fe)))
                  (i32.load16_u offset=6144 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 23))) (i32.const 0x1fe)))))
              (i32.xor
                (i32.xor
                  (i32.load16_u offset=5632 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 31))) (i32.const 0x1fe)))
                  (i32.load16_u offset=5120 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 39))) (i32.const 0x1fe))))
                (i32.xor
                  (i32.load16_u offset=4608 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 47))) (i32.const 0x1fe)))
                  (i32.load16_u offset=4096 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $a) (i64.const 55))) (i32.const 0x1fe))))))
            (i32.xor
              (i32.xor
                (i32.xor
                  (i32.load16_u offset=3584 (i32.shl (i32.wrap_i64 (i64.and (local.get $b) (i64.const 0xff))) (i32.const 1)))
                  (i32.load16_u offset=3072 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 7))) (i32.const 0x1fe))))
                (i32.xor
                  (i32.load16_u offset=2560 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 15))) (i32.const 0x1fe)))
                  (i32.load16_u offset=2048 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 23))) (i32.const 0x1fe)))))
              (i32.xor
                (i32.xor
                  (i32.load16_u offset=1536 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 31))) (i32.const 0x1fe)))
                  (i32.load16_u offset=1024 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 39))) (i32.const 0x1fe))))
                (i32.xor
                  (i32.load16_u offset=512 (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 47))) (i32.const 0x1fe)))
                  (i32.load16_u (i32.and (i32.wrap_i64 (i64.shr_u (local.get $b) (i64.const 55))) (i32.const 0x1fe))))))))
        (local.set $i (i32.add (local.get $i) (i32.const 16)))
        (br $next)))
    ;; The last few bytes one at a time, with the byte-wise table (k = 0).
    (block $end
      (loop $byte
        (br_if $end (i32.ge_s (local.get $i) (local.get $to)))
        (local.set $c
          (i32.xor
            (i32.and (i32.shl (local.get $c) (i32.const 8)) (i32.const 0xffff))
            (i32.load16_u (i32.shl (i32.xor (i32.shr_u (local.get $c) (i32.const 8)) (i32.load8_u (local.get $i))) (i32.const 1)))))
        (local.set $i (i32.add (local.get $i) (i32.const 1)))
        (br $byte)))
    (local.get $c))
)
