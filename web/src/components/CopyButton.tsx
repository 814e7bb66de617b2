import { useState } from "react";
import { CopyIcon } from "./icons.tsx";
import { buttonClass } from "./fields.tsx";

type CopyStatus = "idle" | "copied" | "failed";

/** Copies to the clipboard and says whether it worked; some browsers refuse outside secure contexts. */
export function CopyButton({ text, label }: { text: string; label: string }) {
  const [status, setStatus] = useState<CopyStatus>("idle");
  async function copy() {
    try {
      await navigator.clipboard.writeText(text);
      setStatus("copied");
    } catch {
      setStatus("failed");
    }
  }
  return (
    <span className="inline-flex items-center gap-2">
      <button type="button" className={buttonClass.secondary} onClick={() => void copy()}>
        <CopyIcon /> {label}
      </button>
      <span role="status" className={`text-sm ${status === "failed" ? "text-fail" : "text-pass"}`}>
        {status === "copied" && "Copied."}
        {status === "failed" && "The browser did not allow copying; select the text and copy it by hand."}
      </span>
    </span>
  );
}
