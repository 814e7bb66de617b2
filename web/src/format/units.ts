/** Display formatting with units in the output; the minus sign is U+2212 so columns of dB line up. */
import type { AudioFormat } from "@tidemark/shared/types/report";

const MINUS = "\u2212";
export const NOT_MEASURED = "—";

function signed(value: number, digits: number): string {
  const text = Math.abs(value).toFixed(digits);
  return value < 0 && Number(text) !== 0 ? `${MINUS}${text}` : text;
}

/** A level: null in a report means −∞ (digital silence), written as such. */
export function formatLevel(value: number | null | undefined, unit: string, digits = 1): string {
  if (value === undefined) return NOT_MEASURED;
  const text = value === null ? `${MINUS}∞` : signed(value, digits);
  return unit ? `${text} ${unit}` : text;
}

/** For table cells, where null usually means "no measurement" (unreadable file) rather than silence. */
export function formatOptionalLevel(value: number | null, unit: string, digits = 1): string {
  return value === null ? NOT_MEASURED : formatLevel(value, unit, digits);
}

export function formatNumber(value: number | null | undefined, unit = "", digits = 0): string {
  if (value === null || value === undefined) return NOT_MEASURED;
  const text = signed(value, digits);
  return unit ? `${text} ${unit}` : text;
}

export function formatHz(value: number | null | undefined): string {
  if (value === null || value === undefined) return NOT_MEASURED;
  return value >= 1000 ? `${(value / 1000).toFixed(value >= 10_000 ? 1 : 2)} kHz` : `${Math.round(value)} Hz`;
}

/** Durations as h:mm:ss or m:ss. */
export function formatDuration(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined) return NOT_MEASURED;
  const total = Math.round(seconds);
  const h = Math.floor(total / 3600);
  const m = Math.floor((total % 3600) / 60);
  const s = total % 60;
  const mm = h > 0 ? String(m).padStart(2, "0") : String(m);
  return `${h > 0 ? `${h}:` : ""}${mm}:${String(s).padStart(2, "0")}`;
}

/** Timestamps inside a recording, to a hundredth: findings can be a few milliseconds long. */
export function formatTimestamp(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined) return NOT_MEASURED;
  const h = Math.floor(seconds / 3600);
  const m = Math.floor((seconds % 3600) / 60);
  const s = seconds - h * 3600 - m * 60;
  const ss = s.toFixed(2).padStart(5, "0");
  return h > 0 ? `${h}:${String(m).padStart(2, "0")}:${ss}` : `${m}:${ss}`;
}

export function formatSampleRate(hz: number): string {
  const khz = hz / 1000;
  return `${Number.isInteger(khz) ? khz : khz.toFixed(1)} kHz`;
}

export function formatChannels(channels: number): string {
  if (channels === 1) return "mono";
  if (channels === 2) return "stereo";
  return `${channels} ch`;
}

const CONTAINER_NAMES: Record<AudioFormat["container"], string> = { wav: "WAV", bwf: "BWF", rf64: "RF64", flac: "FLAC", aiff: "AIFF", aifc: "AIFF-C" };

/** A container as its file format is usually called (the Files filter and the file page alike). */
export function formatContainer(container: AudioFormat["container"]): string {
  return CONTAINER_NAMES[container];
}

const ENCODING_NAMES: Record<AudioFormat["encoding"], string> = { pcm: "PCM", float: "floating point", alaw: "A-law", mulaw: "µ-law" };

export function formatEncoding(encoding: AudioFormat["encoding"]): string {
  return ENCODING_NAMES[encoding];
}

export function formatAudioFormat(format: AudioFormat | null): string {
  if (!format) return NOT_MEASURED;
  const depth =
    format.encoding === "float" ? `${format.bitDepth}-bit float` : format.encoding === "pcm" ? `${format.bitDepth}-bit` : formatEncoding(format.encoding);
  return `${formatSampleRate(format.sampleRateHz)} · ${depth} · ${formatChannels(format.channels)}`;
}

export function formatBytes(bytes: number): string {
  const units = ["B", "KB", "MB", "GB", "TB"];
  let value = bytes;
  let unit = 0;
  while (value >= 1024 && unit < units.length - 1) {
    value /= 1024;
    unit += 1;
  }
  return `${unit === 0 ? value : value.toFixed(1)} ${units[unit]}`;
}

const dateTime = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "short" });
const dateOnly = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" });

export function formatDateTime(iso: string | null | undefined): string {
  if (!iso) return NOT_MEASURED;
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : dateTime.format(date);
}

export function formatDate(iso: string | null | undefined): string {
  if (!iso) return NOT_MEASURED;
  const date = new Date(iso);
  return Number.isNaN(date.getTime()) ? iso : dateOnly.format(date);
}
