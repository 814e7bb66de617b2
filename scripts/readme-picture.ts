/**
 * Remakes the README's spectrogram picture (docs/images/spectrogram-speech.png): espeak-ng speaks a line of
 * the invented Harbourside Sound Archive's catalogue, sox makes it a 48 kHz / 24-bit transfer, and the real
 * CLI scans it with --spectrograms. Needs Debian's espeak-ng and sox.
 *
 *   node --import tsx scripts/readme-picture.ts
 */
import { execFileSync } from "node:child_process";
import { copyFileSync, mkdirSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { projectRoot } from "./lib/paths.ts";

const SPOKEN =
  "Harbourside Sound Archive. Oral histories, tape seven. " +
  "We walked down to the quay every morning, and the tide mark on the harbour wall told us how high the water had come in the night.";
// A Greek and Latin-1 file name, as archives have: the title is drawn in the shipped font.
const FOLDER = "oral-histories";
const NAME = "λιμάνι — café tape 07.wav";
const OUT = path.join(projectRoot, "docs", "images", "spectrogram-speech.png");

const work = mkdtempSync(path.join(tmpdir(), "tidemark-picture-"));
try {
  const raw = path.join(work, "raw.wav");
  const folder = path.join(work, "in", FOLDER);
  mkdirSync(folder, { recursive: true });
  execFileSync("espeak-ng", ["-v", "en-gb", "-s", "150", "-w", raw, SPOKEN]);
  // Rate and depth of a preservation transfer; a quiet dither floor so silence is not digital zero.
  execFileSync("sox", [raw, "-r", "48000", "-b", "24", path.join(folder, NAME), "dither"]);
  const pngs = path.join(work, "png");
  try {
    execFileSync(
      process.execPath,
      [path.join(projectRoot, "cli", "bin", "tidemark.js"), "scan", path.join(work, "in"), "--spectrograms", pngs, "--no-fingerprint", "--quiet", "--format", "json", "--out", path.join(work, "report.json")],
      { stdio: "inherit" },
    );
  } catch (error) {
    // Exit 1 is a failing verdict (the synthesiser's speech is band-limited), not an error.
    if ((error as { status?: number }).status !== 1) throw error;
  }
  mkdirSync(path.dirname(OUT), { recursive: true });
  copyFileSync(path.join(pngs, FOLDER, `${NAME}.png`), OUT);
  process.stdout.write(`wrote ${path.relative(process.cwd(), OUT)}\n`);
} finally {
  rmSync(work, { recursive: true, force: true });
}
