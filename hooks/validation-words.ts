/**
 * The API's validation details (`{ field: "body.email", message: "must be
 * an e-mail address" }`, server/http/errors.ts) said as sentences a person
 * can act on, without field paths: "Enter an e-mail address such as
 * name@lab.example." The one place the web app words them; the API keeps
 * its field paths for other callers.
 */

import type { ValidationDetail } from "../contract/views/errors";

export type { ValidationDetail };

/** Whole sentences for fields a person types into, by the field's last name. */
const fieldSentences: Record<string, string> = {
  email: "Enter an e-mail address such as name@lab.example.",
};

/** How a field is named in a sentence, where splitting its name is not enough. */
const fieldWords: Record<string, string> = {
  confirm: "the confirmation",
  regionSelection: "the region selection",
  sheetId: "the participant sheet's id",
  brainId: "the brain table's id",
  n: "the number of participants",
};

/** `regionSelection` → "the region selection"; list indexes are skipped. */
export function fieldName(field: string): string {
  // The request part (body, query) and list indexes are not names a person knows.
  const parts = field
    .split(".")
    .filter(
      (p, i) => p !== "" && !/^\d+$/.test(p) && !(i === 0 && /^(body|query|params)$/.test(p)),
    );
  const last = parts[parts.length - 1] ?? "";
  if (fieldWords[last]) return fieldWords[last];
  const words = last.replace(/([a-z0-9])([A-Z])/g, "$1 $2").toLowerCase();
  return words ? `the ${words}` : "this form";
}

/** One sentence for one detail. */
export function validationSentence(detail: ValidationDetail): string {
  const parts = detail.field.split(".");
  if (parts[0] === "params")
    return "The address of this page is not valid. Go back and open it again from the list.";
  const last = parts.filter((p) => !/^\d+$/.test(p)).pop() ?? "";
  if (fieldSentences[last]) return fieldSentences[last];
  const message = detail.message.trim().replace(/\.$/, "");
  const name = fieldName(detail.field);
  if (/^(must|is|are|should)\b/.test(message)) return sentence(`${name} ${message}`);
  if (/^(give|type|enter|choose|pick|use)\b/.test(message)) return sentence(message);
  // A message that names its field in code ("groupRatio must be above 0").
  if (last && message.startsWith(`${last} `))
    return sentence(`${name} ${message.slice(last.length + 1)}`);
  return sentence(`Check ${name}: ${message}`);
}

/** The sentences for every detail, each once, or null when `details` is not a list of field details. */
export function validationWords(details: unknown): string | null {
  if (!Array.isArray(details) || details.length === 0) return null;
  const valid = details.filter(
    (d): d is ValidationDetail =>
      !!d && typeof d === "object" && typeof d.field === "string" && typeof d.message === "string",
  );
  if (valid.length === 0) return null;
  return [...new Set(valid.map(validationSentence))].join(" ");
}

function sentence(text: string): string {
  const s = text.charAt(0).toUpperCase() + text.slice(1);
  return /[.!?]$/.test(s) ? s : `${s}.`;
}
