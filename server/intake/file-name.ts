/**
 * The name an uploaded file is stored and shown under: its last path part
 * (browsers and tools may send a whole path), without control characters
 * (C0, DEL) and without bidirectional formatting characters — embeddings
 * and overrides U+202A–U+202E, isolates U+2066–U+2069 and the marks U+200E,
 * U+200F, U+061C — which can make a name display as another one
 * ("brain<U+202E>vsc.exe" shows as "brainexe.csv"); trimmed, at most 200
 * characters. A name that is then empty, "." or ".." is no name.
 * Cost: O(length).
 */

// biome-ignore lint/suspicious/noControlCharactersInRegex: control characters are what is removed
const INVISIBLE = /[\u0000-\u001f\u007f\u061c\u200e\u200f\u202a-\u202e\u2066-\u2069]/g;

/** The message when an upload's file has no usable name. */
export const NO_FILE_NAME = "the uploaded file has no name";

/** The cleaned name, or null when nothing usable is left. */
export function cleanFileName(name: string): string | null {
  const base = name.split(/[\\/]/).pop() ?? "";
  const clean = base.replace(INVISIBLE, "").trim().slice(0, 200);
  return clean === "" || clean === "." || clean === ".." ? null : clean;
}
