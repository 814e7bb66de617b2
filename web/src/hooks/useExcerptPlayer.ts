/**
 * One close-up's excerpt: an <audio> element (so the browser does range loading and seeking) routed
 * through a Web Audio graph, element → splitter → (channel routing) → merger → gain → speakers, which
 * gives channel solo and a gain that never exceeds unity. Where Web Audio is missing the element's own
 * volume (also capped at 1) carries the gain and solo is unavailable.
 */
import { useCallback, useEffect, useRef, useState } from "react";
import { clampGainDb, gainDbToLinear, GAIN_START_DB } from "../components/file/playbackSafety.ts";

interface Graph {
  context: AudioContext;
  splitter: ChannelSplitterNode;
  merger: ChannelMergerNode;
  gain: GainNode;
}

type AudioContextCtor = new () => AudioContext;

function audioContextCtor(): AudioContextCtor | null {
  const w = window as unknown as { AudioContext?: AudioContextCtor; webkitAudioContext?: AudioContextCtor };
  return w.AudioContext ?? w.webkitAudioContext ?? null;
}

/** Channel i → left (even) or right (odd); a solo channel goes to both ears so it is heard centred. */
function route(graph: Graph, channels: number, solo: number | null) {
  graph.splitter.disconnect();
  if (solo !== null) {
    graph.splitter.connect(graph.merger, solo, 0);
    graph.splitter.connect(graph.merger, solo, 1);
    return;
  }
  if (channels === 1) {
    graph.splitter.connect(graph.merger, 0, 0);
    graph.splitter.connect(graph.merger, 0, 1);
    return;
  }
  for (let c = 0; c < channels; c++) graph.splitter.connect(graph.merger, c, c % 2);
}

export interface ExcerptPlayer {
  audioRef: (element: HTMLAudioElement | null) => void;
  isPlaying: boolean;
  /** Seconds into the excerpt (0 = the close-up's start). */
  currentSeconds: number;
  gainDb: number;
  setGainDb: (db: number) => void;
  loop: boolean;
  setLoop: (loop: boolean) => void;
  solo: number | null;
  setSolo: (channel: number | null) => void;
  canSolo: boolean;
  play: () => Promise<void>;
  pause: () => void;
  seek: (seconds: number) => void;
  error: string | null;
}

export function useExcerptPlayer(channels: number): ExcerptPlayer {
  const elementRef = useRef<HTMLAudioElement | null>(null);
  // Also in state, so the element's listeners are attached once per element rather than every render.
  const [element, setElement] = useState<HTMLAudioElement | null>(null);
  const graphRef = useRef<Graph | null>(null);
  const [isPlaying, setIsPlaying] = useState(false);
  const [currentSeconds, setCurrentSeconds] = useState(0);
  const [gainDb, setGainDbState] = useState(GAIN_START_DB);
  // The element and graph read the gain from here, so callbacks need not change with it.
  const gainDbRef = useRef(GAIN_START_DB);
  const [loop, setLoop] = useState(false);
  const [solo, setSolo] = useState<number | null>(null);
  const [error, setError] = useState<string | null>(null);
  const canSolo = audioContextCtor() !== null && channels > 1;

  const applyGain = useCallback(() => {
    const linear = gainDbToLinear(gainDbRef.current);
    const graph = graphRef.current;
    const element = elementRef.current;
    if (graph) {
      graph.gain.gain.value = linear;
      if (element) element.volume = 1;
    } else if (element) {
      element.volume = linear;
    }
  }, []);

  const setGainDb = useCallback(
    (db: number) => {
      const clamped = clampGainDb(db);
      gainDbRef.current = clamped;
      setGainDbState(clamped);
      applyGain();
    },
    [applyGain],
  );

  const audioRef = useCallback(
    (node: HTMLAudioElement | null) => {
      elementRef.current = node;
      setElement(node);
      // Quiet from the first moment, before any graph exists.
      if (node) applyGain();
    },
    [applyGain],
  );

  /** Built on the first play: browsers only start an AudioContext after a user gesture. */
  const ensureGraph = useCallback(() => {
    const element = elementRef.current;
    const Ctor = audioContextCtor();
    if (graphRef.current || !element || !Ctor) return;
    const context = new Ctor();
    const source = context.createMediaElementSource(element);
    const n = Math.max(1, Math.min(32, channels));
    const splitter = context.createChannelSplitter(n);
    const merger = context.createChannelMerger(2);
    const gain = context.createGain();
    // Set before anything can sound.
    gain.gain.value = gainDbToLinear(gainDbRef.current);
    source.connect(splitter);
    merger.connect(gain);
    gain.connect(context.destination);
    graphRef.current = { context, splitter, merger, gain };
    route(graphRef.current, n, solo);
    element.volume = 1;
  }, [channels, solo]);

  useEffect(() => {
    const graph = graphRef.current;
    if (graph) route(graph, Math.max(1, Math.min(32, channels)), solo);
  }, [channels, solo]);

  // The playhead follows the element once per frame while playing.
  useEffect(() => {
    if (!isPlaying) return;
    let frame = 0;
    const tick = () => {
      const element = elementRef.current;
      if (element) setCurrentSeconds(element.currentTime);
      frame = requestAnimationFrame(tick);
    };
    frame = requestAnimationFrame(tick);
    return () => cancelAnimationFrame(frame);
  }, [isPlaying]);

  // Element events keep the state honest (the end of the excerpt, a pause from the OS media keys).
  useEffect(() => {
    if (!element) return;
    const onPlay = () => setIsPlaying(true);
    const onPause = () => setIsPlaying(false);
    const onTime = () => setCurrentSeconds(element.currentTime);
    const onError = () => setError("The excerpt could not be played: it may be missing from storage or in a format this browser cannot decode.");
    element.addEventListener("play", onPlay);
    element.addEventListener("pause", onPause);
    element.addEventListener("ended", onPause);
    element.addEventListener("timeupdate", onTime);
    element.addEventListener("seeked", onTime);
    element.addEventListener("error", onError);
    return () => {
      element.removeEventListener("play", onPlay);
      element.removeEventListener("pause", onPause);
      element.removeEventListener("ended", onPause);
      element.removeEventListener("timeupdate", onTime);
      element.removeEventListener("seeked", onTime);
      element.removeEventListener("error", onError);
    };
  }, [element]);

  useEffect(
    () => () => {
      const graph = graphRef.current;
      graphRef.current = null;
      if (graph) void graph.context.close().catch(() => undefined);
    },
    [],
  );

  const play = useCallback(async () => {
    const element = elementRef.current;
    if (!element) return;
    setError(null);
    try {
      ensureGraph();
      applyGain();
      if (graphRef.current?.context.state === "suspended") await graphRef.current.context.resume();
      await element.play();
      setIsPlaying(true);
    } catch (e) {
      setIsPlaying(false);
      setError(`Playback did not start: ${e instanceof Error ? e.message : String(e)}`);
    }
  }, [applyGain, ensureGraph]);

  const pause = useCallback(() => {
    elementRef.current?.pause();
    setIsPlaying(false);
  }, []);

  const seek = useCallback((seconds: number) => {
    const element = elementRef.current;
    const s = Math.max(0, seconds);
    if (element) element.currentTime = s;
    setCurrentSeconds(s);
  }, []);

  return { audioRef, isPlaying, currentSeconds, gainDb, setGainDb, loop, setLoop, solo, setSolo, canSolo, play, pause, seek, error };
}
