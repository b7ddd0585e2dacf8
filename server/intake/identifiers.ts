/**
 * Direct-identifier guard: flags columns that look like names, birth dates
 * (or other full dates), postal addresses, phone numbers, e-mail addresses
 * or record numbers, by the words of the header and by the content of the
 * cells. A flagged column must be dropped at confirm (it is then never
 * stored) or kept with a written reason.
 *
 * Header words: the header is split into lower-case words at spaces,
 * punctuation and camelCase boundaries, and matched against word lists
 * (common practice, no source; the kinds of identifier follow the list of
 * direct identifiers in the HIPAA Privacy Rule, 45 CFR 164.514(b)(2)).
 * Content: the first 200 non-missing cells are tested against patterns for
 * e-mail addresses, phone numbers, full dates, street addresses and
 * "First Last" personal names; a column is flagged when at least half of
 * them match (names also need mostly distinct values, so a category such as
 * "Left Handed" is not flagged). Record numbers are recognised by header
 * words only: by content they cannot be told from participant ids.
 *
 * Cost: one profile pass per column (shared with type inference), then
 * O(columns × 200) pattern tests. Never throws.
 */
import type { IdentifierFlag, IdentifierKind } from "../../contract/views/datasets";
import { isMissing } from "./cells";
import { profileColumn } from "./columns";
import type { RawTable } from "./read-table";

const KIND_WORDS: Record<IdentifierKind, string> = {
  name: "personal names",
  "birth-date": "birth dates",
  address: "postal addresses",
  phone: "phone numbers",
  email: "e-mail addresses",
  "record-number": "record numbers",
};

/** Splits a header into lower-case words: "DateOfBirth" → date, of, birth; "e-mail" → e, mail. */
export function headerWords(header: string): string[] {
  return header
    .replace(/([a-z0-9])([A-Z])/g, "$1 $2")
    .replace(/([A-Z]+)([A-Z][a-z])/g, "$1 $2")
    .toLowerCase()
    .split(/[^a-z0-9]+/)
    .filter((w) => w !== "");
}

const NAME_QUALIFIERS = new Set([
  "first",
  "last",
  "full",
  "given",
  "family",
  "middle",
  "maiden",
  "patient",
  "participant",
  "subject",
  "person",
  "child",
  "parent",
  "mother",
  "father",
  "guardian",
  "contact",
  "sur",
  "fore",
  "pt",
]);

/** The identifier kind suggested by the header words, or null. */
export function identifierKindFromHeader(header: string): IdentifierKind | null {
  const words = headerWords(header);
  const joined = words.join("");
  const has = (w: string) => words.includes(w);
  const hasPair = (a: string, b: string) => words.some((w, i) => w === a && words[i + 1] === b);

  if (has("email") || hasPair("e", "mail") || joined === "mail" || has("emailaddress"))
    return "email";
  if (
    has("phone") ||
    has("telephone") ||
    has("mobile") ||
    has("cellphone") ||
    has("tel") ||
    has("fax") ||
    has("phonenumber") ||
    hasPair("cell", "phone")
  ) {
    return "phone";
  }
  if (
    has("dob") ||
    has("birthdate") ||
    has("birthday") ||
    has("geburtsdatum") ||
    (has("birth") && (has("date") || has("day") || has("of")))
  ) {
    return "birth-date";
  }
  if (
    has("address") ||
    has("street") ||
    has("postcode") ||
    has("zipcode") ||
    has("zip") ||
    hasPair("postal", "code") ||
    has("postalcode") ||
    has("streetaddress")
  ) {
    return "address";
  }
  if (
    has("mrn") ||
    has("nhs") ||
    has("ssn") ||
    has("passport") ||
    hasPair("medical", "record") ||
    hasPair("record", "number") ||
    hasPair("record", "no") ||
    hasPair("hospital", "number") ||
    hasPair("hospital", "id") ||
    hasPair("social", "security") ||
    hasPair("insurance", "number") ||
    hasPair("national", "id") ||
    hasPair("health", "number") ||
    hasPair("chart", "number") ||
    hasPair("patient", "number") ||
    has("medicalrecord") ||
    has("recordnumber")
  ) {
    return "record-number";
  }
  if (
    has("surname") ||
    has("forename") ||
    has("firstname") ||
    has("lastname") ||
    has("fullname") ||
    has("givenname") ||
    has("familyname") ||
    has("middlename") ||
    has("maidenname") ||
    has("initials") ||
    (words.length === 1 && words[0] === "name") ||
    words.some((w, i) => w === "name" && i > 0 && NAME_QUALIFIERS.has(words[i - 1]))
  ) {
    return "name";
  }
  return null;
}

const EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;
const ISO_DATE = /^(19|20)\d\d[-/.](0?[1-9]|1[0-2])[-/.](0?[1-9]|[12]\d|3[01])(?:[T ].*)?$/;
const DMY_DATE = /^(0?[1-9]|[12]\d|3[01])[-/.](0?[1-9]|[12]\d|3[01])[-/.](\d{2}|\d{4})$/;
const PHONE_CHARS = /^\+?[\d\s().-]+$/;
const ADDRESS =
  /^\d+[a-z]?\s+.*\b(street|st|road|rd|avenue|ave|lane|ln|drive|dr|boulevard|blvd|way|court|ct|place|pl|square|sq|terrace|crescent|close|strasse|straße|rue|via|calle)\b\.?/i;
const PERSON_NAME = /^\p{Lu}[\p{Ll}'’-]+(?:\s+\p{Lu}\.?)?(?:\s+\p{Lu}[\p{Ll}'’-]+)+$/u;

function looksLikePhone(v: string): boolean {
  if (!PHONE_CHARS.test(v)) return false;
  const digits = v.replace(/\D/g, "").length;
  if (digits < 7 || digits > 15) return false;
  // A separator or a leading + sets a phone number apart from a plain integer or decimal.
  return /^\+/.test(v) || /\d[\s-]\d/.test(v) || /\(\d+\)/.test(v);
}

const SAMPLE = 200;

/** The identifier kind suggested by a column's cells, with the share that matched, or null. */
export function identifierKindFromCells(
  cells: readonly string[],
): { kind: IdentifierKind; share: number } | null {
  const sample: string[] = [];
  for (const c of cells) {
    if (!isMissing(c)) sample.push(c.trim());
    if (sample.length >= SAMPLE) break;
  }
  if (sample.length === 0) return null;
  const share = (test: (v: string) => boolean) => sample.filter(test).length / sample.length;
  const checks: [IdentifierKind, number][] = [
    ["email", share((v) => EMAIL.test(v))],
    ["birth-date", share((v) => ISO_DATE.test(v) || DMY_DATE.test(v))],
    ["phone", share((v) => !ISO_DATE.test(v) && !DMY_DATE.test(v) && looksLikePhone(v))],
    ["address", share((v) => ADDRESS.test(v))],
  ];
  const distinct = new Set(sample).size / sample.length;
  if (distinct >= 0.8) checks.push(["name", share((v) => PERSON_NAME.test(v))]);
  let best: { kind: IdentifierKind; share: number } | null = null;
  for (const [kind, s] of checks)
    if (s >= 0.5 && (best === null || s > best.share)) best = { kind, share: s };
  return best;
}

/**
 * Flags the columns of `table` that look like direct identifiers (the id
 * column included: if participant ids are names or e-mail addresses, that
 * must be decided too).
 */
export function findIdentifierColumns(table: RawTable): IdentifierFlag[] {
  const flags: IdentifierFlag[] = [];
  table.header.forEach((name, j) => {
    const byHeader = identifierKindFromHeader(name);
    if (byHeader) {
      flags.push({
        column: name,
        kind: byHeader,
        reason: `the column name suggests ${KIND_WORDS[byHeader]}`,
      });
      return;
    }
    // A column of numbers and missing markers only cannot hold names, dates, addresses or e-mails.
    if (profileColumn(table, j).text === 0) return;
    const cells: string[] = [];
    for (let i = 0; i < table.rowCount; i++) {
      const cell = table.cell(i, j);
      if (isMissing(cell)) continue;
      cells.push(cell);
      if (cells.length >= SAMPLE) break;
    }
    const byCells = identifierKindFromCells(cells);
    if (byCells) {
      const pct = Math.round(byCells.share * 100);
      const what =
        byCells.kind === "birth-date"
          ? "full dates (a birth date is a direct identifier)"
          : KIND_WORDS[byCells.kind];
      flags.push({
        column: name,
        kind: byCells.kind,
        reason: `${pct}% of the values look like ${what}`,
      });
    }
  });
  return flags;
}
