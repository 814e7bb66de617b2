/**
 * Typed errors of the WAV/BWF/RF64 reader. Codes are stable (reports, the hostile-input corpus and
 * scripts key on them); messages are one human line saying what was expected and what arrived.
 */
export const WAV_ERROR_CODES = [
  "empty-file",
  "not-riff",
  "not-wave",
  "unsupported-container",
  "truncated",
  "no-fmt-chunk",
  "bad-fmt-chunk",
  "no-data-chunk",
  "unsupported-encoding",
  "bad-channel-count",
  "bad-sample-rate",
  "bad-bit-depth",
  "bad-block-align",
  "bad-ds64",
  "bad-chunk",
] as const;

export type WavErrorCode = (typeof WAV_ERROR_CODES)[number];

export class WavFormatError extends Error {
  readonly code: WavErrorCode;

  constructor(code: WavErrorCode, message: string) {
    super(message);
    this.name = "WavFormatError";
    this.code = code;
  }
}

export function isWavFormatError(error: unknown): error is WavFormatError {
  return error instanceof WavFormatError;
}
