import { useEffect, useImperativeHandle, useRef, useState, type CSSProperties, type PointerEvent, type Ref } from "react";
import type { FileDetailDto, FindingDto } from "@tidemark/shared/types/api";
import { formatTimestamp } from "../../format/units.ts";
import { useExcerptPlayer } from "../../hooks/useExcerptPlayer.ts";
import { HearingCaution } from "./ListeningCaution.tsx";
import { GAIN_MAX_DB, GAIN_MIN_DB, hasSeenHearingCaution, markHearingCautionSeen } from "./playbackSafety.ts";
import { plotAreaInset, SPECTROGRAM_MARGINS, WAVEFORM_MARGINS, type Margins, type NaturalSize } from "./plotGeometry.ts";

export type Closeup = FileDetailDto["closeups"][number];

export interface CloseupJump {
  seconds: number;
  channel: number | null;
}

/** What the page (keyboard, comments) may ask of the close-up. */
export interface CloseupHandle {
  togglePlay: () => void;
  toggleLoop: () => void;
  /** Moves the playhead by `seconds` within the window. */
  nudge: (seconds: number) => void;
  /** Absolute time in the file and the soloed channel, for anchoring a comment. */
  position: () => { seconds: number; channel: number | null };
}

interface CloseupViewProps {
  closeup: Closeup;
  findings: FindingDto[];
  selectedFindingId: number | null;
  channels: number;
  path: string;
  /** Moves the playhead (absolute seconds in the file) and solo, e.g. from a comment link; a new object each time. */
  jump?: CloseupJump | null;
  /** Reported a few times a second, not every frame: the page re-renders on it. */
  onPosition?: (position: { seconds: number; channel: number | null }) => void;
  ref?: Ref<CloseupHandle>;
}

/** Percent of the close-up's time axis for an absolute time, clamped to the window. */
export function closeupPercent(closeup: Pick<Closeup, "startSeconds" | "endSeconds">, seconds: number): number {
  const span = closeup.endSeconds - closeup.startSeconds;
  if (!(span > 0)) return 0;
  return Math.min(100, Math.max(0, ((seconds - closeup.startSeconds) / span) * 100));
}

interface CloseupImageProps {
  src: string;
  alt: string;
  margins: Margins;
  closeup: Closeup;
  findings: FindingDto[];
  selectedFindingId: number | null;
  playheadSeconds: number;
  onSeek: (absoluteSeconds: number) => void;
}

function CloseupImage({ src, alt, margins, closeup, findings, selectedFindingId, playheadSeconds, onSeek }: CloseupImageProps) {
  const [size, setSize] = useState<NaturalSize | null>(null);
  const [failed, setFailed] = useState(false);
  if (failed) return <p role="alert" className="rounded bg-fail-soft px-3 py-2 text-sm text-fail">{alt} could not be loaded; reload to try again.</p>;
  const seekAt = (event: PointerEvent<HTMLDivElement>) => {
    const rect = event.currentTarget.getBoundingClientRect();
    if (rect.width <= 0) return;
    const f = Math.min(1, Math.max(0, (event.clientX - rect.left) / rect.width));
    onSeek(closeup.startSeconds + f * (closeup.endSeconds - closeup.startSeconds));
  };
  return (
    <div className="relative">
      <img
        src={src}
        alt={alt}
        className="block h-auto w-full rounded bg-[#101418]"
        onLoad={(e) => setSize({ width: e.currentTarget.naturalWidth, height: e.currentTarget.naturalHeight })}
        onError={() => setFailed(true)}
      />
      {size && size.width > 0 && size.height > 0 && (
        <div className="absolute cursor-crosshair" style={plotAreaInset(margins, size)} data-closeup-plot onPointerDown={seekAt}>
          {findings.map((finding) => {
            const left = closeupPercent(closeup, finding.startSeconds ?? closeup.startSeconds);
            const right = closeupPercent(closeup, finding.endSeconds ?? finding.startSeconds ?? closeup.startSeconds);
            const selected = finding.id === selectedFindingId;
            return (
              <span
                key={finding.id}
                aria-hidden="true"
                data-closeup-span={finding.id}
                className={`pointer-events-none absolute inset-y-0 border-x-2 ${selected ? "border-[var(--color-marker-selected)] bg-white/15" : "border-[var(--color-marker-warn)] bg-white/5"}`}
                style={{ left: `${left}%`, width: `max(${right - left}%, 2px)` } as CSSProperties}
              />
            );
          })}
          <span
            aria-hidden="true"
            data-playhead
            className="pointer-events-none absolute inset-y-0 w-0.5 -translate-x-px bg-[#7cf3ff] shadow-[0_0_0_1px_rgba(0,0,0,0.6)]"
            style={{ left: `${closeupPercent(closeup, playheadSeconds)}%` }}
          />
        </div>
      )}
    </div>
  );
}

/**
 * One finding's close-up: detailed spectrogram and waveform of its window with the span marked, and the
 * excerpt with play/pause, a playhead, loop, channel solo and a gain that starts 20 dB down.
 */
export function CloseupView({ closeup, findings, selectedFindingId, channels, path, jump, onPosition, ref }: CloseupViewProps) {
  const player = useExcerptPlayer(channels);
  const [cautionOpen, setCautionOpen] = useState(false);
  const playButton = useRef<HTMLButtonElement>(null);
  const inWindow = findings.filter((f) => closeup.findingIds.includes(f.id));
  const { seek, setSolo, play, pause, isPlaying, setLoop, loop, solo, audioRef, canSolo, gainDb, setGainDb, error: playerError, currentSeconds } = player;
  const playheadSeconds = closeup.startSeconds + currentSeconds;

  useEffect(() => {
    if (!jump) return;
    seek(Math.max(0, jump.seconds - closeup.startSeconds));
    if (jump.channel !== null && jump.channel < channels) setSolo(jump.channel);
  }, [jump, closeup.startSeconds, channels, seek, setSolo]);

  // A quarter-second grid is fine for anchoring comments and keeps the page from re-rendering every frame.
  const reportedQuarter = Math.round(playheadSeconds * 4);
  useEffect(() => {
    onPosition?.({ seconds: reportedQuarter / 4, channel: solo });
  }, [reportedQuarter, solo, onPosition]);

  function requestPlay() {
    if (!closeup.excerptUrl) return;
    if (!hasSeenHearingCaution()) {
      setCautionOpen(true);
      return;
    }
    void play();
  }
  function togglePlay() {
    if (isPlaying) pause();
    else requestPlay();
  }

  useImperativeHandle(
    ref,
    () => ({
      togglePlay,
      toggleLoop: () => setLoop(!loop),
      nudge: (seconds) => seek(Math.min(closeup.endSeconds - closeup.startSeconds, Math.max(0, currentSeconds + seconds))),
      position: () => ({ seconds: playheadSeconds, channel: solo }),
    }),
  );

  const windowText = `${formatTimestamp(closeup.startSeconds)} – ${formatTimestamp(closeup.endSeconds)}`;
  const shared = { closeup, findings: inWindow, selectedFindingId, playheadSeconds, onSeek: (s: number) => seek(Math.max(0, s - closeup.startSeconds)) };
  return (
    <div className="rounded-md border border-line bg-[#101418] p-2" data-closeup={closeup.index}>
      <p className="mb-1 px-1 text-xs text-white/85">
        Window {windowText} · {(closeup.secondsPerColumn * 1000).toFixed(1)} ms per pixel column · click the picture to move the playhead
      </p>
      <div className="space-y-1">
        <CloseupImage src={closeup.spectrogramUrl} alt={`Close-up spectrogram of ${path}, ${windowText}`} margins={SPECTROGRAM_MARGINS} {...shared} />
        <CloseupImage src={closeup.waveformUrl} alt={`Close-up waveform of ${path}, ${windowText}`} margins={WAVEFORM_MARGINS} {...shared} />
      </div>
      {closeup.excerptUrl ? (
        <div className="mt-2 flex flex-wrap items-center gap-x-4 gap-y-2 rounded bg-surface px-2 py-2 text-sm text-ink">
          <audio ref={audioRef} src={closeup.excerptUrl} preload="metadata" loop={loop} data-excerpt />
          <button
            ref={playButton}
            type="button"
            onClick={togglePlay}
            aria-label={isPlaying ? "Pause the excerpt" : "Play the excerpt"}
            aria-keyshortcuts="Space"
            className="inline-flex min-w-20 items-center justify-center rounded bg-harbour px-3 py-1 font-medium text-white hover:bg-harbour-strong"
          >
            {isPlaying ? "Pause" : "Play"}
          </button>
          <span className="font-mono text-xs" aria-label="Playhead position">
            {formatTimestamp(playheadSeconds)}
          </span>
          <label className="inline-flex items-center gap-1.5">
            <input type="checkbox" checked={loop} onChange={(e) => setLoop(e.target.checked)} />
            Loop
          </label>
          <label className="inline-flex items-center gap-1.5">
            Channel
            <select
              value={solo === null ? "" : String(solo)}
              onChange={(e) => setSolo(e.target.value === "" ? null : Number(e.target.value))}
              disabled={!canSolo}
              className="rounded border border-line-strong bg-surface px-1.5 py-0.5"
              title={canSolo ? "Solo one channel, heard in both ears" : "Solo needs a recording with more than one channel"}
            >
              <option value="">All channels</option>
              {Array.from({ length: channels }, (_, c) => (
                <option key={c} value={c}>
                  Solo channel {c + 1}
                </option>
              ))}
            </select>
          </label>
          <label className="inline-flex items-center gap-1.5">
            Gain
            <input
              type="range"
              min={GAIN_MIN_DB}
              max={GAIN_MAX_DB}
              step={1}
              value={gainDb}
              onChange={(e) => setGainDb(Number(e.target.value))}
              aria-valuetext={`${gainDb} dB`}
            />
            <span className="w-14 font-mono text-xs">{gainDb === 0 ? "0 dB" : `\u2212${Math.abs(gainDb)} dB`}</span>
          </label>
        </div>
      ) : (
        <p className="mt-2 rounded bg-surface px-2 py-1.5 text-sm text-ink-muted">No excerpt was kept for this window (the per-file budget was spent); the pictures still show it.</p>
      )}
      {cautionOpen && (
        <HearingCaution
          onConfirm={() => {
            markHearingCautionSeen();
            setCautionOpen(false);
            // The dialog's button disappears: keep the keyboard user on the player.
            playButton.current?.focus();
            void play();
          }}
          onCancel={() => {
            setCautionOpen(false);
            playButton.current?.focus();
          }}
        />
      )}
      {playerError && (
        <p role="alert" className="mt-2 rounded bg-fail-soft px-2 py-1.5 text-sm text-fail">
          {playerError}
        </p>
      )}
    </div>
  );
}
