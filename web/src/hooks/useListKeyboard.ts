import { useEffect } from "react";

interface ListKeyboard {
  count: number;
  activeIndex: number;
  onMove: (index: number) => void;
  onOpen: (index: number) => void;
  onToggle?: (index: number) => void;
}

/** Keys typed into a form control belong to that control, not to the list. */
function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable) return true;
  return target.matches("input, textarea, select, button, [role='textbox']");
}

/** Enter on another link or control must keep its own meaning; only rows (or nothing focused) are ours. */
function ownsEnter(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return true;
  return target === document.body || target.closest("[data-list-row]") !== null;
}

/**
 * Page-wide list shortcuts: j / k move the active row, Enter opens it, x toggles its selection.
 * Rows carry `data-list-row`.
 * No modifier keys, so browser and screen-reader shortcuts keep working.
 */
export function useListKeyboard({ count, activeIndex, onMove, onOpen, onToggle }: ListKeyboard): void {
  useEffect(() => {
    function onKeyDown(event: KeyboardEvent) {
      if (event.defaultPrevented || event.altKey || event.ctrlKey || event.metaKey || isTyping(event.target)) return;
      if (count === 0) return;
      if (event.key === "j") {
        event.preventDefault();
        onMove(Math.min(count - 1, activeIndex + 1));
      } else if (event.key === "k") {
        event.preventDefault();
        onMove(Math.max(0, activeIndex - 1));
      } else if (event.key === "Enter" && activeIndex >= 0 && ownsEnter(event.target)) {
        event.preventDefault();
        onOpen(activeIndex);
      } else if (event.key === "x" && activeIndex >= 0 && onToggle) {
        event.preventDefault();
        onToggle(activeIndex);
      }
    }
    document.addEventListener("keydown", onKeyDown);
    return () => document.removeEventListener("keydown", onKeyDown);
  }, [count, activeIndex, onMove, onOpen, onToggle]);
}
