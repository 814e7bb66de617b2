/**
 * Levels drawn as colour use the project's spectrogram palette from shared/src/render, so a swatch in the
 * portal matches the PNG exactly. The one import point: if the palette module changes, only this changes.
 */
import { COLOUR_MAP_SIZE, wracklineColourMap } from "@tidemark/shared/render/colourMap";

/** CSS colour of a level-grid byte (0 = floor … 255 = top), i.e. the PNG's colour for that cell. */
export function levelColour(level: number): string {
  const map = wracklineColourMap();
  const i = Math.min(COLOUR_MAP_SIZE - 1, Math.max(0, Math.round(level)));
  return `rgb(${map[3 * i]}, ${map[3 * i + 1]}, ${map[3 * i + 2]})`;
}

/** The same palette for a dB value on a [minDb, maxDb] scale. */
export function dbColour(db: number, minDb: number, maxDb: number): string {
  return levelColour(((Math.min(maxDb, Math.max(minDb, db)) - minDb) / (maxDb - minDb)) * (COLOUR_MAP_SIZE - 1));
}
