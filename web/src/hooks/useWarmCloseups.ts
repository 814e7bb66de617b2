/**
 * Fetches the first close-ups' pictures into the browser cache once the page has settled, so picking a
 * finding shows its close-up at once. The server marks them immutable, so the cached copies are used.
 */
import { useEffect } from "react";

/** Enough for the usual first findings; files with many close-ups load the rest on demand. */
const WARM_CLOSEUPS = 4;
const SETTLE_MS = 100;

export function useWarmCloseups(closeups: ReadonlyArray<{ spectrogramUrl: string; waveformUrl: string }>): void {
  useEffect(() => {
    if (closeups.length === 0) return;
    const images: HTMLImageElement[] = [];
    const timer = window.setTimeout(() => {
      for (const c of closeups.slice(0, WARM_CLOSEUPS)) {
        for (const src of [c.spectrogramUrl, c.waveformUrl]) {
          const img = new Image();
          img.decoding = "async";
          img.src = src;
          images.push(img);
        }
      }
    }, SETTLE_MS);
    return () => {
      window.clearTimeout(timer);
      // Dropping the references lets unfinished downloads be cancelled when the reviewer moves on.
      images.length = 0;
    };
  }, [closeups]);
}
