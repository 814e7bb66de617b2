;; A WebAssembly face for a JavaScript function of libFLAC's write-callback type (FLAC__StreamDecoderWriteCallback:
;; decoder, frame, buffer[], client data -> status, all i32 in a 32-bit build). A function table holds only
;; WebAssembly functions, so cli/src/audio/libflacFrames.ts puts this export, not the JavaScript function, in the
;; slot of libFLAC's table where the package's own callback was; rebuild libflacWriteHook.generated.ts with
;; `node --import tsx scripts/generate-wasm-kernels.ts`.
(module
  (import "host" "write" (func $write (param i32 i32 i32 i32) (result i32)))
  (export "write" (func $write))
)
