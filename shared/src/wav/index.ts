export * from "./errors.ts";
export * from "./byteSource.ts";
export * from "./wavLayout.ts";
export * from "./fmtChunk.ts";
export * from "./sampleDecoder.ts";
export * from "./dataChunkDecoder.ts";
export * from "./readerFindings.ts";
