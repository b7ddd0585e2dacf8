/**
 * The roster: joining brain-table participants with participant-sheet rows.
 *
 * Rule: ids are compared after trimming white space, ignoring upper and
 * lower case, and treating a leading "sub-" as optional (the BIDS subject
 * prefix), so "sub-07", "SUB-07" and "07" are one participant. Identical ids
 * are matched first; an id whose normalised form is shared by two ids of the
 * same file is a duplicate and is not matched by the rule. Nothing else is
 * merged silently: ids that differ only in leading zeros ("7" and "07",
 * "sub-7" and "sub-007"), only in punctuation, or by one character in ids of
 * four or more characters are reported as near misses, and are matched only
 * through a mapping (brain id → sheet id) that a person confirmed.
 *
 * Cost: O(n) hashing for matches; near misses hash each unmatched id with
 * each of its characters deleted, O(unmatched ids × id length²), and
 * compare only the pairs that share such a key.
 */
import type { NearMiss, RosterDuplicate } from "../../contract/views/roster";
import { ProblemList, problem } from "./errors";
import { quoteCell } from "./cells";

export interface IdMapping {
  brainId: string;
  sheetId: string;
}

export interface RosterMatch {
  brainId: string;
  sheetId: string;
  /** identical ids, the normalisation rule, or a confirmed mapping */
  via: "identical" | "rule" | "mapping";
}

export interface Roster {
  /** The rule applied, in plain words. */
  rule: string;
  /** Matched pairs, in brain-table order. */
  matched: RosterMatch[];
  onlyInBrainTable: string[];
  onlyInParticipantSheet: string[];
  duplicates: RosterDuplicate[];
  nearMisses: NearMiss[];
}

export interface JoinOptions {
  mappings?: readonly IdMapping[];
  brainFile?: string;
  sheetFile?: string;
}

export const ROSTER_RULE =
  'Participant ids are matched after trimming spaces, ignoring upper and lower case, and treating a leading "sub-" as optional (so "sub-07", "SUB-07" and "07" are one participant). Ids that differ in any other way, such as "7" and "07", are never matched automatically: they are listed as near misses until a mapping is confirmed.';

/** The normalised form of an id: trimmed, lower case, without a leading "sub-". */
export function normaliseId(id: string): string {
  const t = id.trim().toLowerCase();
  return t.startsWith("sub-") && t.length > 4 ? t.slice(4) : t;
}

/**
 * Why two different ids in one file are one participant, for the message
 * that refuses the second: within one file such ids are duplicates, as if
 * written the same (the join could not tell which one a row of the other
 * file belongs to).
 */
export function sameParticipantText(
  id: string,
  firstId: string,
  firstRow: number,
  where: { session?: string | null; region?: string } = {},
): string {
  const session = where.session != null ? ` in session ${quoteCell(where.session)}` : "";
  const region = where.region !== undefined ? ` (both have region ${quoteCell(where.region)})` : "";
  return `participant ${quoteCell(id)}${session} is the same participant as ${quoteCell(firstId)} at row ${firstRow}${region}: ids are matched ignoring spaces around them, upper and lower case, and a leading "sub-"`;
}

/**
 * Joins the distinct participant ids of a brain table with those of a
 * participant sheet. Throws IntakeError (422) when a mapping names an id
 * that is not in its file or maps an id twice.
 */
export function joinRoster(
  brainIds: readonly string[],
  sheetIds: readonly string[],
  options: JoinOptions = {},
): Roster {
  const brainFile = options.brainFile ?? "brain table";
  const sheetFile = options.sheetFile ?? "participant sheet";
  const brainSet = new Set(brainIds);
  const sheetSet = new Set(sheetIds);
  const mappedBrain = new Map<string, string>();
  const mappedSheet = new Set<string>();
  const bad = new ProblemList();
  for (const m of options.mappings ?? []) {
    const label = `mapping ${quoteCell(m.brainId)} → ${quoteCell(m.sheetId)}`;
    if (!brainSet.has(m.brainId)) {
      bad.add(
        problem(
          brainFile,
          "unknown_mapping_id",
          `${label}: the brain table has no participant ${quoteCell(m.brainId)}`,
        ),
      );
    } else if (!sheetSet.has(m.sheetId)) {
      bad.add(
        problem(
          sheetFile,
          "unknown_mapping_id",
          `${label}: the participant sheet has no participant ${quoteCell(m.sheetId)}`,
        ),
      );
    } else if (mappedBrain.has(m.brainId)) {
      bad.add(
        problem(
          brainFile,
          "mapping_twice",
          `${label}: participant ${quoteCell(m.brainId)} is already mapped`,
        ),
      );
    } else if (mappedSheet.has(m.sheetId)) {
      bad.add(
        problem(
          sheetFile,
          "mapping_twice",
          `${label}: participant ${quoteCell(m.sheetId)} is already mapped to`,
        ),
      );
    } else {
      mappedBrain.set(m.brainId, m.sheetId);
      mappedSheet.add(m.sheetId);
    }
  }
  bad.throwIfAny(422);

  const duplicates: RosterDuplicate[] = [];
  const collisions = (
    ids: readonly string[],
    source: RosterDuplicate["source"],
    file: string,
  ): Set<string> => {
    const byKey = new Map<string, string[]>();
    for (const id of ids) {
      const k = normaliseId(id);
      const list = byKey.get(k);
      if (list) list.push(id);
      else byKey.set(k, [id]);
    }
    const keys = new Set<string>();
    for (const [key, list] of byKey) {
      if (list.length > 1) {
        duplicates.push({ source, file, key, ids: list });
        keys.add(key);
      }
    }
    return keys;
  };
  const brainDupKeys = collisions(brainIds, "brainTable", brainFile);
  const sheetDupKeys = collisions(sheetIds, "participantSheet", sheetFile);

  const sheetUsed = new Set<string>(mappedSheet);
  const match = new Map<string, RosterMatch>();
  for (const [brainId, sheetId] of mappedBrain)
    match.set(brainId, { brainId, sheetId, via: "mapping" });
  for (const id of brainIds) {
    if (match.has(id) || !sheetSet.has(id) || sheetUsed.has(id)) continue;
    match.set(id, { brainId: id, sheetId: id, via: "identical" });
    sheetUsed.add(id);
  }
  const sheetByKey = new Map<string, string>();
  for (const id of sheetIds) {
    const k = normaliseId(id);
    if (!sheetUsed.has(id) && !sheetDupKeys.has(k)) sheetByKey.set(k, id);
  }
  for (const id of brainIds) {
    if (match.has(id)) continue;
    const k = normaliseId(id);
    if (brainDupKeys.has(k)) continue;
    const sheetId = sheetByKey.get(k);
    if (sheetId !== undefined && !sheetUsed.has(sheetId)) {
      match.set(id, { brainId: id, sheetId, via: "rule" });
      sheetUsed.add(sheetId);
    }
  }

  const matched = brainIds.filter((id) => match.has(id)).map((id) => match.get(id)!);
  const onlyInBrainTable = brainIds.filter((id) => !match.has(id));
  const onlyInParticipantSheet = sheetIds.filter((id) => !sheetUsed.has(id));
  const nearMisses = findNearMisses(onlyInBrainTable, onlyInParticipantSheet);
  const n = mappedBrain.size;
  const rule =
    n > 0
      ? `${ROSTER_RULE} ${n} confirmed mapping${n === 1 ? " was" : "s were"} applied.`
      : ROSTER_RULE;
  return { rule, matched, onlyInBrainTable, onlyInParticipantSheet, duplicates, nearMisses };
}

/** At most this many near misses are reported. */
export const MAX_NEAR_MISSES = 1000;

/**
 * Pairs of unmatched ids that are probably the same participant written
 * differently. Each brain id and each sheet id appears in at most one pair
 * of each reason; the first reason found wins for a pair.
 */
export function findNearMisses(
  brainIds: readonly string[],
  sheetIds: readonly string[],
): NearMiss[] {
  const out: NearMiss[] = [];
  const paired = new Set<string>();
  const add = (brainId: string, sheetId: string, reason: string) => {
    const k = `${brainId}\u0000${sheetId}`;
    if (paired.has(k) || out.length >= MAX_NEAR_MISSES) return;
    paired.add(k);
    out.push({ brainId, sheetId, reason });
  };
  const byKey = (ids: readonly string[], key: (id: string) => string) => {
    const m = new Map<string, string[]>();
    for (const id of ids) {
      const k = key(id);
      const l = m.get(k);
      if (l) l.push(id);
      else m.set(k, [id]);
    }
    return m;
  };
  const zerosKey = (id: string) =>
    normaliseId(id).replace(/\d+/g, (d) => d.replace(/^0+(?=\d)/, ""));
  const sheetZeros = byKey(sheetIds, zerosKey);
  for (const b of brainIds) {
    for (const s of sheetZeros.get(zerosKey(b)) ?? [])
      add(b, s, "same number written with different leading zeros");
  }
  const punctKey = (id: string) => normaliseId(id).replace(/[^\p{L}\p{N}]/gu, "");
  const sheetPunct = byKey(sheetIds, punctKey);
  for (const b of brainIds) {
    const k = punctKey(b);
    if (k === "") continue;
    for (const s of sheetPunct.get(k) ?? []) add(b, s, "differs only in punctuation or spaces");
  }
  // One edit apart: two ids of four or more characters share a key of {id} ∪ {id with one character
  // deleted} exactly when they may be one edit apart (replaced: both lose it; inserted or deleted: one
  // is the other less one; swapped: each loses one of the pair), so only those pairs are compared.
  const sheetNorm = sheetIds.map((s) => normaliseId(s));
  const byDeletion = new Map<string, number[]>();
  sheetNorm.forEach((ns, j) => {
    if (ns.length < 4) return;
    for (const k of deletionKeys(ns)) {
      const list = byDeletion.get(k);
      if (list === undefined) byDeletion.set(k, [j]);
      else if (list[list.length - 1] !== j) list.push(j);
    }
  });
  for (const b of brainIds) {
    const nb = normaliseId(b);
    if (nb.length < 4) continue;
    const candidates = new Set<number>();
    for (const k of deletionKeys(nb)) for (const j of byDeletion.get(k) ?? []) candidates.add(j);
    for (const j of [...candidates].sort((x, y) => x - y)) {
      const kind = oneEditApart(nb, sheetNorm[j]);
      if (kind) add(b, sheetIds[j], kind);
    }
    if (out.length >= MAX_NEAR_MISSES) break;
  }
  return out;
}

/** The text itself and the text with each one character deleted (distinct). */
function deletionKeys(text: string): Set<string> {
  const keys = new Set<string>([text]);
  for (let i = 0; i < text.length; i++) keys.add(text.slice(0, i) + text.slice(i + 1));
  return keys;
}

/**
 * Whether two different strings are one edit apart: one character replaced,
 * inserted or deleted, or two neighbouring characters swapped (the
 * Damerau–Levenshtein distance is 1). Returns the edit in words, or null.
 * Cost: O(length).
 */
export function oneEditApart(a: string, b: string): string | null {
  if (a === b) return null;
  if (a.length === b.length) {
    let first = -1;
    let diffs = 0;
    for (let i = 0; i < a.length; i++) {
      if (a[i] !== b[i]) {
        diffs += 1;
        if (first < 0) first = i;
        if (diffs > 2) return null;
      }
    }
    if (diffs === 1) return "differs by one character";
    if (
      diffs === 2 &&
      a[first] === b[first + 1] &&
      a[first + 1] === b[first] &&
      first + 1 < a.length
    ) {
      return "two neighbouring characters swapped";
    }
    return null;
  }
  const [s, l] = a.length < b.length ? [a, b] : [b, a];
  if (l.length - s.length !== 1) return null;
  let i = 0;
  while (i < s.length && s[i] === l[i]) i += 1;
  return s.slice(i) === l.slice(i + 1) ? "one character more or less" : null;
}
