/**
 * The bext CodingHistory field, read as EBU R 98 (1999) lays it out: one row per stage of the signal's
 * life, rows ended by CR LF, each row comma-separated `X=value` items — A= coding algorithm, F= sampling
 * frequency (Hz), B= bit rate (kbit/s), W= word length (bits), M= mode, T= free text.
 */

export interface CodingHistoryRow {
  /** The row as written, without its line ending. */
  raw: string;
  algorithm: string | null;
  sampleRateHz: number | null;
  bitRateKbps: number | null;
  wordLengthBits: number | null;
  mode: string | null;
  /** T= free text (everything after the first T=, commas included). */
  text: string | null;
  /** Items that are not `X=value` with a known letter, kept as written so nothing is lost. */
  unknown: string[];
}

/** Parses a CodingHistory text into rows; blank lines are skipped. Pure and total: odd input gives `unknown` items. */
export function parseCodingHistory(history: string): CodingHistoryRow[] {
  const rows: CodingHistoryRow[] = [];
  for (const line of history.split(/\r\n|\r|\n/)) {
    const text = line.trim();
    if (text === "") continue;
    rows.push(parseRow(text));
  }
  return rows;
}

function positiveNumber(value: string): number | null {
  const n = Number(value.trim());
  return value.trim() !== "" && Number.isFinite(n) && n > 0 ? n : null;
}

function parseRow(text: string): CodingHistoryRow {
  const row: CodingHistoryRow = {
    raw: text,
    algorithm: null,
    sampleRateHz: null,
    bitRateKbps: null,
    wordLengthBits: null,
    mode: null,
    text: null,
    unknown: [],
  };
  // T= is free text and may itself hold commas; everything after the first T= belongs to it.
  const tAt = text.search(/(^|,)\s*T=/);
  const head = tAt < 0 ? text : text.slice(0, tAt);
  if (tAt >= 0) row.text = text.slice(tAt).replace(/^,?\s*T=/, "").trim();
  for (const raw of head.split(",")) {
    const item = raw.trim();
    if (item === "") continue;
    const m = /^([A-Za-z])=(.*)$/.exec(item);
    if (!m) {
      row.unknown.push(item);
      continue;
    }
    const value = m[2].trim();
    switch (m[1].toUpperCase()) {
      case "A":
        row.algorithm = value;
        break;
      case "F":
        row.sampleRateHz = positiveNumber(value);
        if (row.sampleRateHz === null) row.unknown.push(item);
        break;
      case "B":
        row.bitRateKbps = positiveNumber(value);
        if (row.bitRateKbps === null) row.unknown.push(item);
        break;
      case "W":
        row.wordLengthBits = positiveNumber(value);
        if (row.wordLengthBits === null) row.unknown.push(item);
        break;
      case "M":
        row.mode = value.toLowerCase();
        break;
      default:
        row.unknown.push(item);
    }
  }
  return row;
}

/**
 * The R 98 mode words that fit a channel count. R 98 names mono, stereo, dual-mono and joint-stereo (from
 * memory); for more than two channels "multitrack"/"multichannel" is common practice.
 */
export function modesForChannels(channels: number): readonly string[] {
  if (channels === 1) return ["mono"];
  if (channels === 2) return ["stereo", "dual-mono", "joint-stereo"];
  return ["multitrack", "multichannel", `${channels}-channel`];
}
