/**
 * The file page's keys. Single letters without modifiers, ignored while typing in a form control, so
 * browser and screen-reader shortcuts keep working. Space on a focused button stays that button's.
 */
import { useEffect } from "react";

export interface FileShortcutActions {
  /** False when there is nothing to play: Space then keeps scrolling the page. */
  togglePlay: () => boolean;
  nextFinding: () => void;
  previousFinding: () => void;
  accept: () => void;
  flag: () => void;
  toggleLoop: () => void;
  /** Moves the close-up's playhead by this many seconds (negative: back). */
  nudge: (seconds: number) => void;
  previousFile: () => void;
  nextFile: () => void;
  toggleHelp: () => void;
  closeHelp: () => void;
}

/** Shown in the page's "?" help, in this order; the hook below is the only place the keys are bound. */
export const FILE_SHORTCUTS: ReadonlyArray<{ keys: string[]; does: string }> = [
  { keys: ["Space"], does: "play or pause the open close-up" },
  { keys: ["n"], does: "next finding (opens its close-up)" },
  { keys: ["p"], does: "previous finding" },
  { keys: ["l"], does: "loop the close-up on or off" },
  { keys: [",", "."], does: "move the playhead back / forward by 0.1 s (with Shift: 1 s)" },
  { keys: ["a"], does: "accept: picks “accepted” and puts the cursor in the reason (optional); Enter saves" },
  { keys: ["f"], does: "flag: picks “flagged” and puts the cursor in the reason (required); Enter saves" },
  { keys: ["["], does: "previous file of the list you came from" },
  { keys: ["]"], does: "next file of the list" },
  { keys: ["?"], does: "show or hide this help" },
];

/** Boxes that take text; checkboxes, sliders and buttons do not, so letters stay shortcuts there. */
function isTyping(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable) return true;
  if (target instanceof HTMLInputElement) return !["checkbox", "radio", "range", "button", "submit", "reset"].includes(target.type);
  return target.matches("textarea, select, [role='textbox']");
}

export function useFileShortcuts(actions: FileShortcutActions): void {
  useEffect(() => {
    function onKeyDown(event: KeyboardEvent) {
      if (event.defaultPrevented || event.altKey || event.ctrlKey || event.metaKey || isTyping(event.target)) return;
      const onControl = event.target instanceof HTMLElement && event.target.matches("button, a, input, [role='button'], summary");
      const run = (action: () => void) => {
        event.preventDefault();
        action();
      };
      switch (event.key) {
        case " ":
          if (!onControl && actions.togglePlay()) event.preventDefault();
          break;
        case "n":
          run(actions.nextFinding);
          break;
        case "p":
          run(actions.previousFinding);
          break;
        case "l":
          run(actions.toggleLoop);
          break;
        case "a":
          run(actions.accept);
          break;
        case "f":
          run(actions.flag);
          break;
        case ",":
        case "<":
          run(() => actions.nudge(event.shiftKey ? -1 : -0.1));
          break;
        case ".":
        case ">":
          run(() => actions.nudge(event.shiftKey ? 1 : 0.1));
          break;
        case "[":
          run(actions.previousFile);
          break;
        case "]":
          run(actions.nextFile);
          break;
        case "?":
          run(actions.toggleHelp);
          break;
        case "Escape":
          actions.closeHelp();
          break;
      }
    }
    document.addEventListener("keydown", onKeyDown);
    return () => document.removeEventListener("keydown", onKeyDown);
  }, [actions]);
}
