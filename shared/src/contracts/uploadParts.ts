/**
 * The multipart parts that travel beside a report (a batch upload, or a worker's job result), named as
 * ingest takes them: per file n, `spectrogram` and `waveform` (`<n>.png`, the strip beside the
 * spectrogram), `levelGrid` and `loudnessCurve` (`<n>.json`); per close-up k, `closeupSpectrogram` and
 * `closeupWaveform` (`<n>.<k>.png`) and `excerpt` (`<n>.<k>.wav` or `.flac`). The CLI names its parts with
 * partName(); the server reads them with PART_NAMES and excerptMediaTypeOf().
 */
import { EXCERPT_MEDIA_TYPES, type ExcerptMediaType } from "../types/codes.ts";

export const PART_FIELDS = ["spectrogram", "waveform", "levelGrid", "loudnessCurve", "closeupSpectrogram", "closeupWaveform", "excerpt"] as const;
export type PartField = (typeof PART_FIELDS)[number];

/** A file extension for each excerpt media type. */
export const EXCERPT_EXTENSIONS = { "audio/flac": "flac", "audio/wav": "wav" } as const satisfies Record<ExcerptMediaType, string>;

/** Each part's file name: the pattern the server matches (groups: n, then k) and its shape for messages. */
export const PART_NAMES = {
  spectrogram: { pattern: /^(\d{1,9})\.png$/i, shape: "<n>.png" },
  waveform: { pattern: /^(\d{1,9})\.png$/i, shape: "<n>.png" },
  levelGrid: { pattern: /^(\d{1,9})\.json$/i, shape: "<n>.json" },
  loudnessCurve: { pattern: /^(\d{1,9})\.json$/i, shape: "<n>.json" },
  closeupSpectrogram: { pattern: /^(\d{1,9})\.(\d{1,4})\.png$/i, shape: "<n>.<k>.png" },
  closeupWaveform: { pattern: /^(\d{1,9})\.(\d{1,4})\.png$/i, shape: "<n>.<k>.png" },
  excerpt: { pattern: new RegExp(`^(\\d{1,9})\\.(\\d{1,4})\\.(?:${Object.values(EXCERPT_EXTENSIONS).join("|")})$`, "i"), shape: "<n>.<k>.flac or <n>.<k>.wav" },
} as const satisfies Record<PartField, { pattern: RegExp; shape: string }>;

/** The media type each part is sent with (an excerpt's comes from the report). */
export const PART_MEDIA_TYPES = {
  spectrogram: "image/png",
  waveform: "image/png",
  levelGrid: "application/json",
  loudnessCurve: "application/json",
  closeupSpectrogram: "image/png",
  closeupWaveform: "image/png",
} as const satisfies Record<Exclude<PartField, "excerpt">, string>;

/** The name of file n's part (and of its close-up k's, for the close-up fields and excerpts). */
export function partName(field: PartField, n: number | string, closeup?: { k: number; excerptMediaType?: ExcerptMediaType }): string {
  switch (field) {
    case "spectrogram":
    case "waveform":
      return `${n}.png`;
    case "levelGrid":
    case "loudnessCurve":
      return `${n}.json`;
    case "closeupSpectrogram":
    case "closeupWaveform":
    case "excerpt": {
      if (!closeup) throw new Error(`a ${field} part names its close-up`);
      const ext = field === "excerpt" ? EXCERPT_EXTENSIONS[closeup.excerptMediaType ?? "audio/wav"] : "png";
      return `${n}.${closeup.k}.${ext}`;
    }
  }
}

/** An excerpt part's media type, from its name's extension (null: not an excerpt name). */
export function excerptMediaTypeOf(name: string): ExcerptMediaType | null {
  const ext = name.slice(name.lastIndexOf(".") + 1).toLowerCase();
  return EXCERPT_MEDIA_TYPES.find((t) => EXCERPT_EXTENSIONS[t] === ext) ?? null;
}
