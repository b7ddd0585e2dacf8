/**
 * What differs between two sets of fit inputs, in plain words: what a refit
 * changed against the fit it re-runs (`refitChanges`), and why a fit is no
 * longer what a new fit of its model would be (`staleReasons`).
 *
 * Pure (no database): callers pass the facts of each side — the dataset
 * versions, the confirmed id mappings, the set-aside list and the model
 * fields. Participant ids appear only when `participantsVisible`; a Viewer
 * of a restricted study gets counts instead. Cost O(size of the lists).
 */
import { type ExclusionRule, ruleText } from "../../contract/exclusion-rules";
import type { ModelSpec } from "../../contract/spec";

/** A dataset version as the words name it. */
export interface VersionRef {
  id: string;
  version: number;
  fileName: string;
}

/** A set-aside as a recipe lists it (region absent: every region). */
export interface SetAsideEntry {
  participant: string;
  region?: string;
  reason: string;
}

/** What a fit ran on, or what a new fit of the model would run on. */
export interface InputFacts {
  brain: VersionRef;
  sheet: VersionRef | null;
  mappings: readonly { brainId: string; sheetId: string }[];
  setAside: readonly SetAsideEntry[];
  /** The model fields (the set-aside list is compared apart); null when unknown (a deleted model). */
  model: Omit<ModelSpec, "setAside"> | null;
}

/** Words for a model field's name. */
const fieldWords: Record<string, string> = {
  kind: "kind",
  regions: "regions",
  predictor: "predictor",
  group: "grouping",
  levels: "group levels",
  covariates: "covariates",
  interaction: "interaction",
  estimator: "estimator",
  inference: "inference",
  resamples: "rearrangements",
  seed: "seed",
  correction: "correction",
  weights: "weighting",
  tau2Method: "τ² method",
  smallSample: "small-sample adjustment",
  exclusionRules: "exclusion rules",
};

/** A field's value as compared and shown: exclusion rules as their words ("mean_fd > 0.5 (motion)"). */
function comparable(key: string, value: unknown): unknown {
  return key === "exclusionRules" && Array.isArray(value)
    ? (value as ExclusionRule[]).map(ruleText)
    : value;
}

/** Names listed before "and k more". */
const LIST_MAX = 5;

function listed(names: readonly string[]): string {
  const shown = names.slice(0, LIST_MAX).join(", ");
  return names.length > LIST_MAX ? `${shown} and ${names.length - LIST_MAX} more` : shown;
}

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

const keyOf = (s: { participant: string; region?: string }) =>
  `${s.participant}\u0000${s.region ?? ""}`;

const scopeOf = (s: SetAsideEntry) => (s.region === undefined ? "all regions" : s.region);

/** Set-asides in `after` and not in `before` (added), and the reverse (restored), by participant and region. */
export function setAsideDiff(
  before: readonly SetAsideEntry[],
  after: readonly SetAsideEntry[],
): { added: SetAsideEntry[]; restored: SetAsideEntry[] } {
  const was = new Set(before.map(keyOf));
  const now = new Set(after.map(keyOf));
  return {
    added: after.filter((s) => !was.has(keyOf(s))),
    restored: before.filter((s) => !now.has(keyOf(s))),
  };
}

/** "sub-12 (all regions)", or a count when ids are withheld. */
function namedSetAsides(entries: readonly SetAsideEntry[], visible: boolean): string {
  if (!visible) return plural(entries.length, "participant", "participants");
  return listed(entries.map((s) => `${s.participant} (${scopeOf(s)})`));
}

function setAsideWords(
  before: readonly SetAsideEntry[],
  after: readonly SetAsideEntry[],
  visible: boolean,
): string[] {
  const { added, restored } = setAsideDiff(before, after);
  const out: string[] = [];
  if (added.length > 0) out.push(`Set aside: ${namedSetAsides(added, visible)}`);
  if (restored.length > 0) out.push(`Restored: ${namedSetAsides(restored, visible)}`);
  return out;
}

function mappingWords(
  before: InputFacts["mappings"],
  after: InputFacts["mappings"],
  visible: boolean,
): string | null {
  const key = (m: { brainId: string; sheetId: string }) => `${m.brainId}\u0000${m.sheetId}`;
  const was = new Set(before.map(key));
  const now = new Set(after.map(key));
  const added = after.filter((m) => !was.has(key(m)));
  const removed = before.filter((m) => !now.has(key(m)));
  if (added.length === 0 && removed.length === 0) return null;
  if (!visible) return `Id mappings changed: ${added.length} added, ${removed.length} removed`;
  const words = (ms: typeof added) => listed(ms.map((m) => `${m.brainId} = ${m.sheetId}`));
  return `Id mappings changed: ${[...(added.length > 0 ? [`${words(added)} added`] : []), ...(removed.length > 0 ? [`${words(removed)} removed`] : [])].join("; ")}`;
}

function valueWords(key: string, value: unknown): string {
  if (value === undefined || value === null) return key === "regions" ? "every region" : "none";
  if (Array.isArray(value))
    return value.length === 0 ? (key === "regions" ? "every region" : "none") : value.join(", ");
  if (typeof value === "boolean") return value ? "on" : "off";
  return String(value);
}

function arrayChange(key: string, before: readonly string[], after: readonly string[]): string {
  const added = after.filter((v) => !before.includes(v));
  const removed = before.filter((v) => !after.includes(v));
  if (added.length === 0 && removed.length === 0) return `${fieldWords[key] ?? key} reordered`;
  const parts = [
    ...(added.length > 0 ? [`${listed(added)} added`] : []),
    ...(removed.length > 0 ? [`${listed(removed)} removed`] : []),
  ];
  return `${fieldWords[key] ?? key}: ${parts.join(", ")}`;
}

/** The model fields that differ, in words ("estimator ols → huber"); empty when either side is unknown. */
export function modelFieldChanges(
  before: InputFacts["model"],
  after: InputFacts["model"],
): string[] {
  if (!before || !after) return [];
  const out: string[] = [];
  const keys = new Set([...Object.keys(before), ...Object.keys(after)]);
  for (const key of keys) {
    // Set-asides are compared apart; the stream scheme is how the engine draws, recorded by
    // every new fit, not a choice made in the model.
    if (key === "setAside" || key === "rearrangementStreams") continue;
    const a = comparable(key, (before as Record<string, unknown>)[key]);
    const b = comparable(key, (after as Record<string, unknown>)[key]);
    if (JSON.stringify(a ?? null) === JSON.stringify(b ?? null)) continue;
    const bothLists =
      (Array.isArray(a) || a === undefined) &&
      (Array.isArray(b) || b === undefined) &&
      (Array.isArray(a) || Array.isArray(b));
    if (
      bothLists &&
      key !== "levels" &&
      ((a as unknown[] | undefined)?.length ?? 0) > 0 &&
      ((b as unknown[] | undefined)?.length ?? 0) > 0
    ) {
      out.push(arrayChange(key, a as string[], b as string[]));
    } else {
      out.push(`${fieldWords[key] ?? key} ${valueWords(key, a)} → ${valueWords(key, b)}`);
    }
  }
  return out;
}

function versionWords(
  what: "brain table" | "participant sheet",
  before: VersionRef | null,
  after: VersionRef | null,
): string | null {
  if (before?.id === after?.id) return null;
  if (!after) return `No ${what} (was version ${before?.version})`;
  const named = `${what} version ${after.version} (${after.fileName})`;
  if (!before)
    return `${what[0].toUpperCase()}${what.slice(1)} version ${after.version} (${after.fileName}) added`;
  return after.version > before.version
    ? `New ${named}`
    : `${named[0].toUpperCase()}${named.slice(1)} instead of version ${before.version}`;
}

/**
 * What a refit changed against the fit it re-runs, in plain words: a new
 * brain table or participant sheet version, changed id mappings,
 * participants set aside or restored (named with their scope, or counted
 * when ids are withheld), changed model fields. Empty when nothing changed.
 */
export function refitChanges(
  earlier: InputFacts,
  later: InputFacts,
  options: { participantsVisible: boolean },
): string[] {
  const visible = options.participantsVisible;
  const out: string[] = [];
  const brain = versionWords("brain table", earlier.brain, later.brain);
  if (brain) out.push(brain);
  const sheet = versionWords("participant sheet", earlier.sheet, later.sheet);
  if (sheet) out.push(sheet);
  const mappings = mappingWords(earlier.mappings, later.mappings, visible);
  if (mappings) out.push(mappings);
  out.push(...setAsideWords(earlier.setAside, later.setAside, visible));
  const model = modelFieldChanges(earlier.model, later.model);
  if (model.length > 0) out.push(`Model changed: ${model.join("; ")}`);
  return out;
}

/**
 * Why a fit is no longer what a new fit of its model would be, in plain
 * words; empty when it still is. `current` holds the study's current
 * dataset versions and id mappings, the set-aside list a new fit would
 * apply, and the model's current fields.
 */
export function staleReasons(
  fit: InputFacts,
  current: InputFacts,
  options: { participantsVisible: boolean },
): string[] {
  const visible = options.participantsVisible;
  const out: string[] = [];
  if (fit.brain.id !== current.brain.id) {
    out.push(
      current.brain.version > fit.brain.version
        ? `A newer brain table (version ${current.brain.version}, ${current.brain.fileName}) was uploaded`
        : `The study's brain table is now version ${current.brain.version} (${current.brain.fileName})`,
    );
  }
  if (fit.sheet?.id !== current.sheet?.id) {
    if (!current.sheet) out.push("The study has no participant sheet now");
    else if (!fit.sheet)
      out.push(
        `A participant sheet (version ${current.sheet.version}, ${current.sheet.fileName}) was uploaded`,
      );
    else if (current.sheet.version > fit.sheet.version)
      out.push(
        `A newer participant sheet (version ${current.sheet.version}, ${current.sheet.fileName}) was uploaded`,
      );
    else
      out.push(
        `The study's participant sheet is now version ${current.sheet.version} (${current.sheet.fileName})`,
      );
  }
  const mappings = mappingWords(fit.mappings, current.mappings, visible);
  if (mappings) out.push(`${mappings} since this fit`);
  const { added, restored } = setAsideDiff(fit.setAside, current.setAside);
  if (added.length > 0 || restored.length > 0) {
    const parts = visible
      ? [
          ...added.map((s) => `${s.participant} (${scopeOf(s)}) added`),
          ...restored.map((s) => `${s.participant} (${scopeOf(s)}) restored`),
        ]
      : [
          ...(added.length > 0 ? [`${added.length} added`] : []),
          ...(restored.length > 0 ? [`${restored.length} restored`] : []),
        ];
    const shown =
      parts.length > LIST_MAX * 2
        ? [...parts.slice(0, LIST_MAX * 2), `and ${parts.length - LIST_MAX * 2} more`]
        : parts;
    out.push(`Set-asides changed since this fit: ${shown.join(", ")}`);
  }
  const model = modelFieldChanges(fit.model, current.model);
  if (model.length > 0) out.push(`The model was changed since this fit: ${model.join("; ")}`);
  return out;
}
