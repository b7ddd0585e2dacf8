/**
 * Analysis plans (contract/plans.ts): registering one (the plan as given,
 * the SHA-256 of its canonical JSON, who, when, whether confirmed data
 * already existed), listing them, countersigning, and applying the current
 * plan's exclusion rules as study-wide set-asides.
 *
 * A registered plan never changes: the database refuses it
 * (migration 0015) except for setting the countersignature once. A new
 * version is a new plan naming the one it replaces and why.
 *
 * Exclusion rules are applied when a plan is registered on a study with
 * confirmed data and when data are confirmed later (datasets.ts), in the
 * same transaction as the registration or the confirmation's audit
 * events. Each participant (brain-table id, through the confirmed id
 * mappings) meeting a rule on the participant sheet is set aside from
 * every region with the reason `ruleReason(rule)`, logged as any
 * set-aside; a participant already set aside from every region is left
 * as is (no duplicates). Cost: one read of the current versions, O(rows ×
 * rules).
 */
import { createHash } from "node:crypto";
import { and, desc, eq, inArray, isNull, lte } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { plans, setAsides, users, type PlanRow } from "../../db/schema";
import {
  compareWithPlan,
  plannedCurveChoice,
  ruleReason,
  type Plan,
  type planCreateSchema,
} from "../../contract/plans";
import { meetsRule } from "../../contract/exclusion-rules";
import type { ModelSpec } from "../../contract/spec";
import type { FitPlanView, PlanView } from "../../contract/views/plans";
import type { z } from "zod";
import { HttpError, conflict, notFound } from "../http/errors";
import { idSchema } from "../http/validate";
import { recordEvent } from "./audit";
import { currentVersions } from "./datasets";
import { buildFitInputs, confirmedMappings } from "./fit-inputs";
import { canonicalJson } from "./sealing";

interface Actor {
  id: string;
}

export type PlanCreate = z.output<typeof planCreateSchema>;

/** SHA-256 (hex) of the canonical JSON of a plan. */
export function planSha256(plan: Plan): string {
  return createHash("sha256").update(canonicalJson(plan), "utf8").digest("hex");
}

async function views(db: Queryable, rows: readonly PlanRow[]): Promise<PlanView[]> {
  const ids = [
    ...new Set(
      rows.flatMap((r) => [r.registeredBy, ...(r.countersignedBy ? [r.countersignedBy] : [])]),
    ),
  ];
  const who =
    ids.length > 0
      ? await db
          .select({ id: users.id, name: users.name })
          .from(users)
          .where(inArray(users.id, ids))
      : [];
  const names = new Map(who.map((u) => [u.id, u.name]));
  return rows.map((r) => ({
    id: r.id,
    studyId: r.studyId,
    sha256: r.sha256,
    registeredAt: r.registeredAt.toISOString(),
    registeredBy: { id: r.registeredBy, name: names.get(r.registeredBy) ?? null },
    dataSeen: r.dataSeen,
    replaces: r.replaces,
    replaceReason: r.replaceReason,
    countersignedBy: r.countersignedBy
      ? { id: r.countersignedBy, name: names.get(r.countersignedBy) ?? null }
      : null,
    countersignedAt: r.countersignedAt?.toISOString() ?? null,
    plan: r.plan,
  }));
}

/** For routes under /plans/:planId: the plan's study, or null. */
export async function studyOfPlan(
  db: Database,
  params: Record<string, string>,
): Promise<string | null> {
  if (!idSchema.safeParse(params.planId).success) return null;
  const [row] = await db
    .select({ studyId: plans.studyId })
    .from(plans)
    .where(eq(plans.id, params.planId));
  return row?.studyId ?? null;
}

/** The study's plans, newest first. */
export async function listPlans(db: Queryable, studyId: string): Promise<PlanView[]> {
  const rows = await db
    .select()
    .from(plans)
    .where(eq(plans.studyId, studyId))
    .orderBy(desc(plans.registeredAt), desc(plans.id));
  return views(db, rows);
}

async function findPlanRow(db: Queryable, studyId: string, planId: string): Promise<PlanRow> {
  const [row] = await db
    .select()
    .from(plans)
    .where(and(eq(plans.id, planId), eq(plans.studyId, studyId)));
  if (!row) throw notFound("Plan not found.");
  return row;
}

export async function getPlan(db: Queryable, studyId: string, planId: string): Promise<PlanView> {
  const [v] = await views(db, [await findPlanRow(db, studyId, planId)]);
  return v;
}

/** The plan current at `at` (the newest registered at or before it), or null. */
export async function planAt(db: Queryable, studyId: string, at: Date): Promise<PlanRow | null> {
  const [row] = await db
    .select()
    .from(plans)
    .where(and(eq(plans.studyId, studyId), lte(plans.registeredAt, at)))
    .orderBy(desc(plans.registeredAt), desc(plans.id))
    .limit(1);
  return row ?? null;
}

/** 409 plan_registered: the answer to any attempt to change or delete a registered plan. */
export function planRegistered(planId: string): HttpError {
  return new HttpError(
    409,
    "plan_registered",
    `Plan ${planId} is registered and cannot be changed or deleted; register a new version that names it in "replaces", with the reason.`,
  );
}

/**
 * Registers a plan (and applies its exclusion rules when the study holds
 * confirmed data). 404 when `replaces` names no plan of this study; 400
 * naming the rule when a rule's column is not on the current participant
 * sheet.
 */
export async function registerPlan(
  db: Database,
  actor: Actor,
  studyId: string,
  input: PlanCreate,
  now: Date,
): Promise<PlanView> {
  const row = await db.transaction(async (tx) => {
    if (input.replaces !== undefined) {
      if (!idSchema.safeParse(input.replaces).success)
        throw notFound(`No plan ${input.replaces} in this study to replace.`);
      const [old] = await tx
        .select({ id: plans.id })
        .from(plans)
        .where(and(eq(plans.id, input.replaces), eq(plans.studyId, studyId)));
      if (!old) throw notFound(`No plan ${input.replaces} in this study to replace.`);
    }
    const { brain, participants } = await currentVersions(tx, studyId);
    const [created] = await tx
      .insert(plans)
      .values({
        studyId,
        plan: input.plan,
        sha256: planSha256(input.plan),
        registeredBy: actor.id,
        registeredAt: now,
        dataSeen: brain !== null || participants !== null,
        replaces: input.replaces ?? null,
        replaceReason: input.reason ?? null,
      })
      .returning();
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "plan.registered",
      targetType: "plan",
      targetId: created.id,
      after: {
        title: input.plan.title,
        sha256: created.sha256,
        dataSeen: created.dataSeen,
        replaces: created.replaces,
        reason: created.replaceReason,
      },
      at: now,
    });
    await applyPlanRules(tx, actor, studyId, input.plan, now, { strict: true });
    return created;
  });
  // The stored plan must hash to the stored hash (the JSON type keeps what the schema gave).
  const [v] = await views(db, [row]);
  return v;
}

/** A Reviewer (or an Owner) countersigns a plan once; 409 when it is already countersigned or is their own. */
export async function countersignPlan(
  db: Database,
  actor: Actor,
  studyId: string,
  planId: string,
  now: Date,
): Promise<PlanView> {
  const row = await db.transaction(async (tx) => {
    const found = await findPlanRow(tx, studyId, planId);
    if (found.countersignedBy !== null) throw conflict(`Plan ${planId} is already countersigned.`);
    if (found.registeredBy === actor.id)
      throw new HttpError(
        409,
        "second_person_required",
        "A plan is countersigned by someone other than the person who registered it.",
      );
    const [signed] = await tx
      .update(plans)
      .set({ countersignedBy: actor.id, countersignedAt: now })
      .where(eq(plans.id, planId))
      .returning();
    await recordEvent(tx, {
      studyId,
      actorId: actor.id,
      kind: "plan.countersigned",
      targetType: "plan",
      targetId: planId,
      after: { sha256: found.sha256 },
      at: now,
    });
    return signed;
  });
  const [v] = await views(db, [row]);
  return v;
}

/**
 * The participants (brain-table ids) meeting each rule, from the joined
 * current data; a participant meeting several rules is listed under the
 * first. Null when the study has no brain table or participant sheet.
 * `strict`: a rule on a column the sheet lacks is a 400 (registration);
 * otherwise that rule is skipped (a later confirmation).
 */
async function participantsByRule(
  db: Queryable,
  studyId: string,
  plan: Plan,
  strict: boolean,
): Promise<Map<number, string[]> | null> {
  const { brain, participants } = await currentVersions(db, studyId);
  if (!brain || !participants) return null;
  const mappings = await confirmedMappings(db, studyId);
  const { data } = await buildFitInputs(db, {
    brainVersionId: brain.id,
    sheetVersionId: participants.id,
    mappings,
    session: null,
  });
  const problems: { field: string; message: string }[] = [];
  const out = new Map<number, string[]>();
  const taken = new Set<string>();
  plan.exclusionRules.forEach((rule, k) => {
    const values = data.numericColumns[rule.column] ?? data.categoricalColumns[rule.column];
    if (!values) {
      problems.push({
        field: `body.plan.exclusionRules.${k}.column`,
        message: `no column '${rule.column}' in the participant sheet ${participants.fileName} (version ${participants.version})`,
      });
      return;
    }
    const hit: string[] = [];
    data.participants.forEach((p, i) => {
      if (!taken.has(p) && meetsRule(rule, values[i], plan.missing)) {
        hit.push(p);
        taken.add(p);
      }
    });
    out.set(k, hit);
  });
  if (strict && problems.length > 0)
    throw new HttpError(
      400,
      "validation_failed",
      problems.map((p) => `${p.field}: ${p.message}`).join("; "),
      problems,
    );
  return out;
}

/**
 * Sets aside every participant meeting one of `plan`'s rules (see the
 * module note). Runs inside the caller's transaction. Returns how many
 * set-asides it added.
 */
export async function applyPlanRules(
  tx: Queryable,
  actor: Actor,
  studyId: string,
  plan: Plan,
  now: Date,
  options: { strict?: boolean } = {},
): Promise<number> {
  if (plan.exclusionRules.length === 0) return 0;
  const byRule = await participantsByRule(tx, studyId, plan, options.strict ?? false);
  if (!byRule) return 0;
  const everyRegion = await tx
    .select({ participant: setAsides.participantId })
    .from(setAsides)
    .where(
      and(eq(setAsides.studyId, studyId), isNull(setAsides.restoredAt), isNull(setAsides.region)),
    );
  const already = new Set(everyRegion.map((r) => r.participant));
  let added = 0;
  for (const [k, participantIds] of byRule) {
    const rule = plan.exclusionRules[k];
    const reason = ruleReason(rule);
    for (const participant of participantIds) {
      if (already.has(participant)) continue;
      already.add(participant);
      const [created] = await tx
        .insert(setAsides)
        .values({
          studyId,
          participantId: participant,
          region: null,
          reason,
          createdBy: actor.id,
          createdAt: now,
        })
        .returning({ id: setAsides.id });
      await recordEvent(tx, {
        studyId,
        actorId: actor.id,
        kind: "participant.set_aside",
        targetType: "participant",
        targetId: participant,
        after: { setAsideId: created.id, participant, region: null, reason, rule },
        at: now,
      });
      added += 1;
    }
  }
  return added;
}

/** After data are confirmed: applies the study's current plan's rules (in the caller's transaction). */
export async function applyCurrentPlanRules(
  tx: Queryable,
  actor: Actor,
  studyId: string,
  now: Date,
): Promise<number> {
  const current = await planAt(tx, studyId, now);
  return current ? applyPlanRules(tx, actor, studyId, current.plan, now) : 0;
}

/**
 * A fit compared with the plan current when it was created, or null when
 * the study had none then. The rule participants are the study-wide
 * set-asides the plan's rules gave, made at or before the fit.
 */
export async function fitPlan(
  db: Queryable,
  fit: {
    studyId: string;
    createdAt: Date;
    /** The fit's model fields, or null when its recipe cannot be read as a model. */
    spec: ModelSpec | null;
  },
): Promise<FitPlanView | null> {
  const row = await planAt(db, fit.studyId, fit.createdAt);
  if (!row) return null;
  if (!fit.spec)
    return {
      id: row.id,
      sha256: row.sha256,
      registeredAt: row.registeredAt.toISOString(),
      model: null,
      asPlanned: false,
      deviations: ["the fit's recipe does not hold a readable model"],
    };
  const spec = fit.spec;
  const reasons = row.plan.exclusionRules.map(ruleReason);
  const ruled =
    reasons.length > 0
      ? await db
          .select({ participant: setAsides.participantId })
          .from(setAsides)
          .where(
            and(
              eq(setAsides.studyId, fit.studyId),
              isNull(setAsides.region),
              inArray(setAsides.reason, reasons),
              lte(setAsides.createdAt, fit.createdAt),
            ),
          )
      : [];
  const compared = compareWithPlan(row.plan, { spec, setAside: spec.setAside }, [
    ...new Set(ruled.map((r) => r.participant)),
  ]);
  return {
    id: row.id,
    sha256: row.sha256,
    registeredAt: row.registeredAt.toISOString(),
    ...compared,
    ...(spec.kind === "specification-curve"
      ? { curveChoice: plannedCurveChoice(row.plan, spec) }
      : {}),
  };
}
