/**
 * Copying text in the browser: the asynchronous Clipboard API, or, where the
 * page may not use it, a hidden text area selected and copied. Throws when
 * neither works (the caller shows the text selected for copying by hand).
 */
import type { CopyOutcome } from "./clipboard-types";

export async function copyText(text: string): Promise<CopyOutcome> {
  try {
    if (navigator.clipboard?.writeText) {
      await navigator.clipboard.writeText(text);
      return "copied";
    }
  } catch {
    // permission refused: fall back to a selection
  }
  const area = document.createElement("textarea");
  area.value = text;
  area.setAttribute("readonly", "");
  area.style.position = "fixed";
  area.style.opacity = "0";
  document.body.appendChild(area);
  area.select();
  const ok = document.execCommand("copy");
  document.body.removeChild(area);
  if (!ok)
    throw new Error("The browser did not allow copying; select the paragraph and copy it by hand.");
  return "copied";
}
