import { useId, useState } from "react";
import type { BandEnergies, BandLevel } from "@tidemark/shared/types/report";
import { formatHz, formatLevel } from "../../format/units.ts";

const WIDTH = 640;
const HEIGHT = 220;
const PAD = { left: 44, right: 8, top: 10, bottom: 34 };
const FLOOR_DB = -120;

/** Round the axis to 10 dB steps that enclose every band. */
function dbRange(levels: BandLevel[]): { min: number; max: number } {
  const values = levels.map((b) => b.db).filter((v): v is number => v !== null);
  if (values.length === 0) return { min: FLOOR_DB, max: 0 };
  const min = Math.max(FLOOR_DB, Math.floor(Math.min(...values) / 10) * 10 - 10);
  const max = Math.min(0, Math.ceil(Math.max(...values) / 10) * 10);
  return { min, max: max > min ? max : min + 10 };
}

function shortHz(hz: number): string {
  return hz >= 1000 ? `${Number((hz / 1000).toFixed(hz >= 10_000 ? 0 : 1))}k` : String(Math.round(hz));
}

export function BandEnergyChart({ bands }: { bands: BandEnergies }) {
  const [resolution, setResolution] = useState<"octave" | "third">("octave");
  const titleId = useId();
  const levels = bands[resolution];
  if (bands.octave.length === 0 && bands.third.length === 0) {
    return <p className="text-ink-muted">No band energies were measured for this file.</p>;
  }
  const { min, max } = dbRange(levels);
  const plotW = WIDTH - PAD.left - PAD.right;
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const slot = plotW / Math.max(1, levels.length);
  const y = (db: number) => PAD.top + ((max - Math.max(min, Math.min(max, db))) / (max - min)) * plotH;
  const ticks = [];
  for (let db = max; db >= min; db -= max - min > 60 ? 20 : 10) ticks.push(db);
  const labelEvery = levels.length > 16 ? 3 : 1;

  return (
    <div>
      <fieldset className="mb-2 flex gap-3 text-sm">
        <legend className="sr-only">Band resolution</legend>
        {(["octave", "third"] as const).map((r) => (
          <label key={r} className="inline-flex items-center gap-1.5">
            <input type="radio" name="band-resolution" value={r} checked={resolution === r} onChange={() => setResolution(r)} className="accent-harbour" />
            {r === "octave" ? "Octave bands" : "Third-octave bands"}
          </label>
        ))}
      </fieldset>
      <svg viewBox={`0 0 ${WIDTH} ${HEIGHT}`} role="img" aria-labelledby={titleId} className="h-auto w-full max-w-3xl">
        <title id={titleId}>{`Energy per ${resolution === "octave" ? "octave" : "third-octave"} band, ${levels.length} bands, in dB`}</title>
        {ticks.map((db) => (
          <g key={db}>
            <line x1={PAD.left} x2={WIDTH - PAD.right} y1={y(db)} y2={y(db)} stroke="var(--color-line)" strokeWidth="1" />
            <text x={PAD.left - 6} y={y(db) + 4} textAnchor="end" fontSize="11" fill="var(--color-ink-muted)">
              {db}
            </text>
          </g>
        ))}
        <text x={10} y={PAD.top + plotH / 2} fontSize="11" fill="var(--color-ink-muted)" transform={`rotate(-90 10 ${PAD.top + plotH / 2})`} textAnchor="middle">
          dB
        </text>
        {levels.map((band, i) => {
          const x = PAD.left + i * slot + slot * 0.15;
          const top = band.db === null ? y(min) : y(band.db);
          return (
            <g key={band.centerHz}>
              <rect x={x} y={top} width={slot * 0.7} height={Math.max(0, PAD.top + plotH - top)} fill="var(--color-harbour)" rx="1.5" data-band-hz={band.centerHz}>
                <title>{`${formatHz(band.centerHz)}: ${formatLevel(band.db, "dB")}`}</title>
              </rect>
              {i % labelEvery === 0 && (
                <text x={x + slot * 0.35} y={HEIGHT - PAD.bottom + 14} textAnchor="middle" fontSize="10" fill="var(--color-ink-muted)">
                  {shortHz(band.centerHz)}
                </text>
              )}
            </g>
          );
        })}
        <text x={PAD.left + plotW / 2} y={HEIGHT - 4} textAnchor="middle" fontSize="11" fill="var(--color-ink-muted)">
          band centre (Hz)
        </text>
      </svg>
    </div>
  );
}
