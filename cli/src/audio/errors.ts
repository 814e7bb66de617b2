/**
 * I/O failures of the audio reader, with stable codes for reports and exit handling. Malformed audio
 * is not an I/O failure: readAudioFile rethrows the header walker's WavFormatError unchanged.
 */
export const AUDIO_FILE_ERROR_CODES = [
  "not-found",
  "permission-denied",
  "is-directory",
  "not-a-file",
  "symlink-loop",
  "io-error",
] as const;

export type AudioFileErrorCode = (typeof AUDIO_FILE_ERROR_CODES)[number];

export class AudioFileError extends Error {
  readonly code: AudioFileErrorCode;

  constructor(code: AudioFileErrorCode, message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "AudioFileError";
    this.code = code;
  }
}

/** Maps a Node system error (errno code) met while opening or reading `path` to an AudioFileError. */
export function audioFileErrorFromSystem(error: unknown, path: string | Buffer): AudioFileError {
  const errno = (error as { code?: unknown } | null)?.code;
  switch (errno) {
    case "ENOENT":
    case "ENOTDIR":
      return new AudioFileError("not-found", `${path}: no such file`, { cause: error });
    case "EACCES":
    case "EPERM":
      return new AudioFileError("permission-denied", `${path}: permission denied`, { cause: error });
    case "EISDIR":
      return new AudioFileError("is-directory", `${path}: is a directory, not an audio file`, { cause: error });
    case "ELOOP":
      return new AudioFileError("symlink-loop", `${path}: too many levels of symbolic links`, { cause: error });
    default: {
      const detail = typeof errno === "string" ? errno : error instanceof Error ? error.message : String(error);
      return new AudioFileError("io-error", `${path}: read failed (${detail})`, { cause: error });
    }
  }
}
