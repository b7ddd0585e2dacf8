/**
 * The rules a model must satisfy for a fit to run, in one place for the
 * fit engine (`runFit` refuses with the first problem), the model service
 * (POST and PATCH of a model check them against the study's current data)
 * and the model form (in the browser, against what it knows of the data).
 * Plain TypeScript, no server code: the web app imports it.
 *
 * - `specProblems`: rules of the model fields alone.
 * - `dataProblems`: rules against the shape of the data (regions, columns
 *   and their types, sessions, standard errors, the levels of a group).
 * - `minimumParticipants`, `minimumPerGroup`: what every region needs,
 *   judged per region on the values (run-fit.ts counts them).
 * - `dataPreconditions`: those per-region preconditions in plain words,
 *   for the form to show before a fit is run.
 */
import type { ExclusionRule } from "./exclusion-rules";
import { curveChoices } from "./specification-curve";
import type { ModelSpec } from "./spec";

export interface SpecProblem {
  /** Field path inside the model fields, e.g. "predictor" or "covariates.1". */
  field: string;
  message: string;
}

type Kind = ModelSpec["kind"];
type Estimator = ModelSpec["estimator"];

/** Estimators each kind accepts. */
export const estimatorsByKind: Readonly<Record<Kind, readonly Estimator[]>> = {
  "one-sample": ["ols", "rank", "huber", "bisquare"],
  "two-group": ["ols", "welch", "rank", "huber", "bisquare"],
  association: ["ols", "rank", "huber", "bisquare", "skipped", "bend"],
  reliability: ["ols"],
  // A prediction's method is fixed (ridge regression inside cross-validation); the field keeps its default.
  prediction: ["ols"],
  // A specification curve's estimators are those of its underlying question (association or two-group; see curveKind).
  "specification-curve": ["ols", "welch", "rank", "huber", "bisquare", "skipped", "bend"],
};

/** The question a specification curve asks: an association with a predictor, otherwise two groups. */
export function curveKind(spec: Pick<ModelSpec, "predictor">): "association" | "two-group" {
  return spec.predictor ? "association" : "two-group";
}

/** The rules of a specification curve's own fields (every other kind: `specifications` refused). */
function curveProblems(spec: ModelSpec, add: (field: string, message: string) => void): void {
  if (spec.kind !== "specification-curve") {
    if (spec.specifications !== undefined)
      add("specifications", "used by kind 'specification-curve' only");
    return;
  }
  if (spec.predictor && spec.group)
    add(
      "group",
      "a specification curve asks one question: a predictor (association) or a group (two groups), not both",
    );
  if (!spec.predictor && !spec.group)
    add(
      "predictor",
      "a specification curve needs a predictor (association) or a group and levels (two groups)",
    );
  if (spec.group && !spec.predictor && !spec.levels)
    add("levels", "a specification curve of two groups needs the two levels to compare");
  if (!spec.regions || spec.regions.length !== 1)
    add("regions", "a specification curve takes exactly one region");
  if (spec.inference !== "parametric" && spec.inference !== "permutation")
    add(
      "inference",
      "kind 'specification-curve' takes parametric inference or permutation (the joint test)",
    );
  if (spec.correction !== "none")
    add("correction", "kind 'specification-curve' has one region; no correction applies");
  if (spec.weights !== "none") add("weights", "kind 'specification-curve' does not take weights");
  if (spec.covariates.length > 0)
    add("covariates", "a specification curve lists its covariates in specifications.covariateSets");
  const kind = curveKind(spec);
  const { estimators: estimatorsListed, covariateSets: sets } = curveChoices(spec);
  if (new Set(estimatorsListed).size !== estimatorsListed.length)
    add("specifications.estimators", "an estimator is listed twice");
  estimatorsListed.forEach((e, k) => {
    if (!estimatorsByKind[kind].includes(e))
      add(`specifications.estimators.${k}`, `'${e}' is not available for kind '${kind}'`);
    else if (!takesDesign(e) && !(kind === "association" && e === "rank")) {
      const j = sets.findIndex((set) => set.length > 0);
      if (j >= 0)
        add(
          `specifications.estimators.${k}`,
          `estimator '${e}' does not take covariates, and covariate set ${j + 1} has some`,
        );
    }
  });
  if (new Set(sets.map((set) => JSON.stringify(set))).size !== sets.length)
    add("specifications.covariateSets", "a covariate set is listed twice");
  sets.forEach((set, j) => {
    if (new Set(set).size !== set.length)
      add(`specifications.covariateSets.${j}`, "a column is listed twice");
    for (const c of set) {
      if (c === spec.predictor)
        add(`specifications.covariateSets.${j}`, `'${c}' is already the predictor`);
      if (c === spec.group) add(`specifications.covariateSets.${j}`, `'${c}' is already the group`);
    }
  });
}

/** Estimators that fit a design with covariates (least squares and M-estimation). */
function takesDesign(estimator: Estimator): boolean {
  return estimator === "ols" || estimator === "huber" || estimator === "bisquare";
}

/**
 * Rules of the model fields that need no data: a kind's required fields,
 * estimators a kind accepts, what goes with what. Returns every problem
 * (empty when the model is consistent). Cost O(fields).
 */
export function specProblems(spec: ModelSpec): SpecProblem[] {
  const out: SpecProblem[] = [];
  const add = (field: string, message: string) => out.push({ field, message });
  const { kind } = spec;
  if (kind !== "specification-curve" && !estimatorsByKind[kind].includes(spec.estimator))
    add("estimator", `'${spec.estimator}' is not available for kind '${kind}'`);
  if (kind === "association" && !spec.predictor)
    add(
      "predictor",
      "an association needs a predictor (a numeric column of the participant sheet)",
    );
  if (kind === "prediction" && !spec.predictor)
    add(
      "predictor",
      "a prediction needs the trait to predict (a numeric column of the participant sheet)",
    );
  if (
    kind !== "association" &&
    kind !== "prediction" &&
    kind !== "specification-curve" &&
    spec.predictor
  )
    add("predictor", `not used by kind '${kind}'`);
  if (kind === "two-group" && !spec.group)
    add("group", "a two-group model needs a grouping column");
  if (
    spec.group &&
    kind !== "two-group" &&
    kind !== "association" &&
    kind !== "prediction" &&
    kind !== "specification-curve"
  )
    add("group", `not used by kind '${kind}'`);
  if (spec.levels && !spec.group) add("levels", "given without a group");
  if (spec.levels && kind === "prediction")
    add("levels", "not used by kind 'prediction' (the group only balances the folds)");
  if (spec.levels && spec.levels[0] === spec.levels[1]) add("levels", "the two levels must differ");
  if (spec.interaction && kind !== "association") add("interaction", `not used by kind '${kind}'`);
  if (spec.interaction && kind === "association" && !spec.group)
    add("interaction", "an interaction needs a group");
  if (spec.predictor && spec.covariates.includes(spec.predictor))
    add("covariates", `'${spec.predictor}' is already the predictor`);
  if (spec.group && spec.covariates.includes(spec.group))
    add("covariates", `'${spec.group}' is already the group`);
  if (new Set(spec.covariates).size !== spec.covariates.length)
    add("covariates", "a column is listed twice");
  if (spec.regions && new Set(spec.regions).size !== spec.regions.length)
    add("regions", "a region is listed twice");
  if (spec.correction === "maxt" && spec.inference !== "permutation")
    add("correction", "max-T correction requires permutation inference");
  if (kind === "prediction") {
    if (spec.inference !== "permutation" && spec.inference !== "none")
      add("inference", "kind 'prediction' takes permutation inference or none");
    if (spec.correction !== "none")
      add(
        "correction",
        "kind 'prediction' reports one score for all regions together; no correction applies",
      );
    if (spec.weights !== "none") add("weights", "kind 'prediction' does not take weights");
    if (spec.folds === "leave-one-out" && spec.repeats !== undefined && spec.repeats !== 1)
      add("repeats", "leave-one-out has one partition; repeats must be 1");
    if (spec.lambda !== undefined && spec.lambdaGrid !== undefined)
      add("lambdaGrid", "give a fixed lambda or a grid to choose from, not both");
  } else {
    if (spec.inference === "none") add("inference", `'none' is for kind 'prediction' only`);
    for (const field of ["folds", "repeats", "lambda", "lambdaGrid"] as const)
      if (spec[field] !== undefined) add(field, "used by kind 'prediction' only");
  }
  if (kind === "reliability") {
    if (spec.inference !== "parametric")
      add("inference", "kind 'reliability' supports parametric inference only");
    if (spec.covariates.length > 0)
      add("covariates", "kind 'reliability' does not take covariates");
    if (spec.weights !== "none") add("weights", "kind 'reliability' does not take weights");
  }
  if (spec.weights === "first-level-se") {
    if (spec.estimator !== "ols") add("weights", "'first-level-se' requires estimator 'ols'");
    if (spec.inference !== "parametric")
      add("weights", "'first-level-se' supports parametric inference only");
  }
  if (
    spec.covariates.length > 0 &&
    !takesDesign(spec.estimator) &&
    !(kind === "association" && spec.estimator === "rank")
  ) {
    add("covariates", `estimator '${spec.estimator}' does not take covariates`);
  }
  if (
    spec.inference === "permutation" &&
    spec.estimator !== "ols" &&
    (spec.covariates.length > 0 || (kind === "association" && spec.group))
  ) {
    add(
      "inference",
      `permutation with covariates requires estimator 'ols' (Freedman–Lane); '${spec.estimator}' has no such scheme`,
    );
  }
  if (spec.exclusionRules !== undefined && kind !== "association" && kind !== "two-group")
    add(
      "exclusionRules",
      kind === "specification-curve"
        ? "a specification curve lists its rules in specifications.exclusionRules"
        : `used by kinds 'association' and 'two-group' only`,
    );
  if (spec.interaction && !takesDesign(spec.estimator))
    add("interaction", `estimator '${spec.estimator}' does not support an interaction`);
  curveProblems(spec, add);
  return out;
}

/** What the data rules need to know; a part left undefined is not judged. */
export interface DataShape {
  /** the brain table's regions */
  regions?: readonly string[];
  /** session labels of the brain table (0 without a session column) */
  sessions?: number;
  hasStandardErrors?: boolean;
  /** the participant sheet's columns by type */
  numericColumns?: readonly string[];
  categoricalColumns?: readonly string[];
  /**
   * The levels of a column among the participants a fit would use (not set
   * aside from every region), or undefined when they are not known.
   */
  levelsOf?: (column: string) => readonly string[] | undefined;
  /** How messages name the tables, e.g. "the brain table x.csv (version 2)". */
  brainTable?: string;
  participantSheet?: string;
}

/**
 * Rules of a model against the shape of the data: regions that exist,
 * columns that exist with the type each field needs, sessions for
 * reliability, standard errors for weights, and a group with the two
 * levels to compare. Returns every problem; parts of the shape that are
 * undefined are not judged. Cost O(fields + regions + columns).
 */
export function dataProblems(spec: ModelSpec, shape: DataShape): SpecProblem[] {
  const out: SpecProblem[] = [];
  const add = (field: string, message: string) => out.push({ field, message });
  const brain = shape.brainTable ?? "the brain table";
  const sheet = shape.participantSheet ?? "the participant sheet";
  if (shape.regions) {
    const known = new Set(shape.regions);
    if (shape.regions.length === 0) add("regions", `${brain} has no regions`);
    (spec.regions ?? []).forEach((r, k) => {
      if (!known.has(r)) add(`regions.${k}`, `no region '${r}' in ${brain}`);
    });
  }
  if (spec.kind === "reliability" && shape.sessions !== undefined && shape.sessions < 2) {
    add(
      "kind",
      `reliability needs a brain table with at least two sessions; ${brain} has ${shape.sessions === 0 ? "no session column" : "one session"}`,
    );
  }
  if (spec.weights === "first-level-se" && shape.hasStandardErrors === false)
    add("weights", `'first-level-se' requires standard errors in ${brain}`);
  const numeric = shape.numericColumns;
  const categorical = shape.categoricalColumns;
  if (numeric && categorical) {
    const isNumeric = new Set(numeric);
    const isCategorical = new Set(categorical);
    const need = (field: string, name: string | undefined, numbersOnly: string | null) => {
      if (name === undefined) return false;
      if (!isNumeric.has(name) && !isCategorical.has(name)) {
        add(field, `no column '${name}' in ${sheet}`);
        return false;
      }
      if (numbersOnly !== null && !isNumeric.has(name)) {
        add(field, `column '${name}' of ${sheet} is a category; ${numbersOnly}`);
        return false;
      }
      return true;
    };
    if (spec.kind === "association")
      need("predictor", spec.predictor, "an association needs a numeric trait");
    if (spec.kind === "prediction")
      need("predictor", spec.predictor, "a prediction needs a numeric trait");
    if (spec.kind === "specification-curve") {
      need("predictor", spec.predictor, "an association needs a numeric trait");
      (spec.specifications?.covariateSets ?? []).forEach((set, j) => {
        set.forEach((c, k) => {
          need(`specifications.covariateSets.${j}.${k}`, c, null);
        });
      });
    }
    // The rules a curve switches on and off, and the rules of an ordinary model: judged alike.
    const rulesAt = (prefix: string, rules: readonly ExclusionRule[]) =>
      rules.forEach((rule, k) => {
        const field = `${prefix}.${k}`;
        const order = rule.op !== "==" && rule.op !== "!=";
        if (
          !need(
            field,
            rule.column,
            order ? `'${rule.op}' compares numbers; a category takes == or !=` : null,
          )
        )
          return;
        if (isNumeric.has(rule.column) && !Number.isFinite(Number(rule.value)))
          add(
            field,
            `column '${rule.column}' of ${sheet} holds numbers; the value '${rule.value}' is not a number`,
          );
      });
    if (spec.kind === "specification-curve")
      rulesAt("specifications.exclusionRules", spec.specifications?.exclusionRules ?? []);
    rulesAt("exclusionRules", spec.exclusionRules ?? []);
    spec.covariates.forEach((c, k) => {
      need(
        `covariates.${k}`,
        c,
        spec.kind === "one-sample"
          ? "a one-sample model takes numeric covariates only (they are mean-centred)"
          : spec.kind === "prediction"
            ? "a prediction takes numeric confounds only"
            : null,
      );
    });
    if (spec.group && need("group", spec.group, null)) {
      const levels = spec.kind === "prediction" ? undefined : shape.levelsOf?.(spec.group);
      if (levels) {
        if (spec.levels) {
          for (const level of spec.levels)
            if (!levels.includes(level))
              add("levels", `level '${level}' is not present in column '${spec.group}'`);
        } else if (levels.length !== 2) {
          add(
            "group",
            `column '${spec.group}' has ${levels.length} levels (${levels.join(", ")}); name the two to compare in levels`,
          );
        }
      }
    }
  }
  return out;
}

/** The fewest participants a region needs for the kind and estimator (after set-asides and missing values). */
export function minimumParticipants(kind: Kind, estimator: Estimator): number {
  if (kind === "association" && estimator === "skipped") return 5;
  if (kind === "association" && estimator === "bend") return 4;
  if (kind === "association") return 3;
  return 2;
}

/** Two groups: the fewest participants each group needs in every region. */
export function minimumPerGroup(estimator: Estimator): number {
  return estimator === "rank" ? 1 : 2;
}

function listed(items: readonly string[]): string {
  if (items.length <= 1) return items.join("");
  return `${items.slice(0, -1).join(", ")} and ${items[items.length - 1]}`;
}

/**
 * The preconditions of a model that only the values decide, in plain
 * words: `beforeRun` are judged against the study's current data when the
 * model is saved (and again when a fit runs); `atRun` only when a fit runs.
 */
export function dataPreconditions(spec: ModelSpec): { beforeRun: string[]; atRun: string[] } {
  const beforeRun: string[] = [];
  const atRun: string[] = [];
  if (spec.kind === "reliability") {
    beforeRun.push("Every region needs at least 2 participants with a value in every session.");
    return { beforeRun, atRun };
  }
  if (spec.kind === "prediction") {
    const confounds =
      spec.covariates.length > 0 ? `, the trait and ${listed(spec.covariates)}` : " and the trait";
    beforeRun.push(
      `Participants are used when they have a value in every chosen region${confounds}; the others are left out of the prediction.`,
    );
    atRun.push(
      spec.folds === "leave-one-out"
        ? "Leave-one-out needs at least 3 participants."
        : `Each of the ${spec.folds ?? 10} folds needs participants to hold out${spec.group ? `, and each level of ${spec.group} at least as many participants as folds` : ""}.`,
    );
    return { beforeRun, atRun };
  }
  const columns = [spec.predictor, spec.group, ...spec.covariates].filter((c): c is string =>
    Boolean(c),
  );
  const min = minimumParticipants(spec.kind, spec.estimator);
  beforeRun.push(
    `Every region needs at least ${min} participants with a contrast value${columns.length > 0 ? ` and a value for ${listed(columns)}` : ""}; each region keeps its own participants.`,
  );
  if (spec.group && !spec.levels)
    beforeRun.push(
      `The column ${spec.group} must have exactly two levels among the participants, or name the two to compare.`,
    );
  if (spec.group && spec.levels)
    beforeRun.push(
      `Both ${spec.levels[0]} and ${spec.levels[1]} must occur in the column ${spec.group}.`,
    );
  if (spec.kind === "two-group") {
    const g = minimumPerGroup(spec.estimator);
    beforeRun.push(
      `Each of the two groups needs at least ${g} participant${g === 1 ? "" : "s"} in every region.`,
    );
  }
  if (spec.weights === "first-level-se")
    beforeRun.push(
      "Every participant with a contrast value needs a first-level standard error above 0.",
    );
  atRun.push(
    "No column of the design may be a combination of the others in a region (for example a covariate with one value for everyone there).",
  );
  return { beforeRun, atRun };
}
