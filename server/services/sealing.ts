/**
 * Approval and sealing of fits.
 *
 * A Reviewer or Owner approves a finished fit (`fits.approve`); an Owner
 * seals an approved fit (`fits.seal`). The seal stores the SHA-256 of the
 * fit's canonical recipe+result JSON with who sealed it and when; from then
 * on database triggers refuse any change to the fit's row, its per-region
 * rows and the seal itself (db/migrations/0009_fit-sealing-immutable.sql).
 * Each step records an audit event (fit.approved, fit.sealed) in the same
 * transaction. The seal also keeps the model as it was at sealing
 * (`SealedModel`): the sealed fit's view shows that name, not a later
 * rename or deletion.
 *
 * The study's setting "A second person signs off" (contract/sign-off.ts)
 * is read inside the same transaction: while it is on, the fit's starter
 * cannot approve it and one person cannot start, approve and seal it (409
 * second_person_required); while it is off, the seal records whether one
 * person did all three (`singlePersonSignOff`).
 *
 * Canonical JSON follows the JSON Canonicalization Scheme (RFC 8785): object
 * keys sorted by UTF-16 code units, no white space, numbers in the
 * ECMAScript shortest round-trip form, strings as JSON.stringify writes
 * them. The hash covers `{ "recipe": …, "result": … }` exactly as stored.
 */
import { createHash } from "node:crypto";
import { eq } from "drizzle-orm";
import type { Database, Queryable } from "../../db/client";
import { fitApprovals, fitSeals, fits, models, studies, type Fit } from "../../db/schema";
import { conflict, HttpError } from "../http/errors";
import {
  approvalRefusalMessage,
  isSinglePersonSignOff,
  mayApprove,
  maySeal,
  sealRefusalMessage,
  secondPersonRequiredCode,
} from "../../contract/sign-off";
import type { SealedModel } from "../../contract/views/fits";
import { recordEvent } from "./audit";

interface Actor {
  id: string;
}

/**
 * Canonical JSON text of a JSON value (RFC 8785): sorted keys, no white
 * space. Pure; cost O(size · log keys). Undefined object members are left
 * out, as JSON.stringify does. Throws TypeError for a non-finite number or a
 * value JSON cannot hold (function, symbol, bigint, undefined at the top).
 */
export function canonicalJson(value: unknown): string {
  if (value === null) return "null";
  switch (typeof value) {
    case "boolean":
      return value ? "true" : "false";
    case "string":
      return JSON.stringify(value);
    case "number":
      if (!Number.isFinite(value))
        throw new TypeError(`canonicalJson: ${value} is not a JSON number`);
      return JSON.stringify(value);
    case "object": {
      if (Array.isArray(value))
        return `[${value.map((v) => (v === undefined ? "null" : canonicalJson(v))).join(",")}]`;
      const record = value as Record<string, unknown>;
      const keys = Object.keys(record)
        .filter((k) => record[k] !== undefined)
        .sort();
      return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson(record[k])}`).join(",")}}`;
    }
    default:
      throw new TypeError(`canonicalJson: a ${typeof value} is not a JSON value`);
  }
}

/** SHA-256 (hex) of the canonical JSON of `{ recipe, result }`. Pure. */
export function sealHash(recipe: unknown, result: unknown): string {
  return createHash("sha256").update(canonicalJson({ recipe, result }), "utf8").digest("hex");
}

/** True when the fit is sealed. */
export async function isSealed(db: Queryable, fitId: string): Promise<boolean> {
  const [row] = await db
    .select({ fitId: fitSeals.fitId })
    .from(fitSeals)
    .where(eq(fitSeals.fitId, fitId));
  return row !== undefined;
}

/** Whether the study's "A second person signs off" is on (read in the caller's transaction). */
async function secondPersonSignOff(tx: Queryable, studyId: string): Promise<boolean> {
  const [study] = await tx
    .select({ on: studies.secondPersonSignOff })
    .from(studies)
    .where(eq(studies.id, studyId));
  return study?.on ?? true;
}

/**
 * Approves a finished fit for sealing. Throws 409 when the fit is not done
 * or is already approved, and 409 second_person_required when the actor
 * started the fit while the study's "A second person signs off" is on.
 */
export async function approveFit(db: Database, actor: Actor, fit: Fit, now: Date): Promise<void> {
  await db.transaction(async (tx) => {
    const [current] = await tx
      .select({ status: fits.status, createdBy: fits.createdBy })
      .from(fits)
      .where(eq(fits.id, fit.id))
      .for("update");
    if (current?.status !== "done")
      throw conflict(
        `Only a finished fit can be approved (this one is ${current?.status ?? "gone"}).`,
      );
    const [existing] = await tx
      .select({ at: fitApprovals.approvedAt })
      .from(fitApprovals)
      .where(eq(fitApprovals.fitId, fit.id));
    if (existing) throw conflict(`This fit was already approved on ${existing.at.toISOString()}.`);
    if (!mayApprove(await secondPersonSignOff(tx, fit.studyId), current.createdBy, actor.id)) {
      throw new HttpError(409, secondPersonRequiredCode, approvalRefusalMessage);
    }
    await tx.insert(fitApprovals).values({ fitId: fit.id, approvedBy: actor.id, approvedAt: now });
    await recordEvent(tx, {
      studyId: fit.studyId,
      actorId: actor.id,
      kind: "fit.approved",
      targetType: "fit",
      targetId: fit.id,
      after: { modelId: fit.modelId },
      at: now,
    });
  });
}

/**
 * Seals an approved, finished fit: stores the SHA-256 of its canonical
 * recipe+result JSON and whether one person started, approved and sealed
 * it. Returns the hash. Throws 409 when the fit is not done, not approved,
 * or already sealed, and 409 second_person_required when the actor started
 * and approved it while the study's "A second person signs off" is on (the
 * setting was off at approval).
 */
export async function sealFit(db: Database, actor: Actor, fit: Fit, now: Date): Promise<string> {
  return db.transaction(async (tx) => {
    const [current] = await tx.select().from(fits).where(eq(fits.id, fit.id)).for("update");
    if (current?.status !== "done")
      throw conflict(
        `Only a finished fit can be sealed (this one is ${current?.status ?? "gone"}).`,
      );
    const [sealed] = await tx
      .select({ at: fitSeals.sealedAt })
      .from(fitSeals)
      .where(eq(fitSeals.fitId, fit.id));
    if (sealed) throw conflict(`This fit was already sealed on ${sealed.at.toISOString()}.`);
    const [approved] = await tx
      .select({ at: fitApprovals.approvedAt, by: fitApprovals.approvedBy })
      .from(fitApprovals)
      .where(eq(fitApprovals.fitId, fit.id));
    if (!approved)
      throw conflict(
        "This fit has not been approved: a Reviewer or Owner approves it before it can be sealed.",
      );
    if (
      !maySeal(await secondPersonSignOff(tx, fit.studyId), current.createdBy, approved.by, actor.id)
    ) {
      throw new HttpError(409, secondPersonRequiredCode, sealRefusalMessage);
    }
    const singlePersonSignOff = isSinglePersonSignOff(current.createdBy, approved.by, actor.id);
    const sha256 = sealHash(current.recipe, current.result);
    const [model] = await tx
      .select({
        name: models.name,
        regionSelection: models.regionSelection,
        circular: models.circular,
        deletedAt: models.deletedAt,
      })
      .from(models)
      .where(eq(models.id, current.modelId));
    const snapshot: SealedModel | null = model
      ? {
          name: model.name,
          regionSelection: model.regionSelection,
          circular: model.circular,
          deleted: model.deletedAt !== null,
        }
      : null;
    await tx.insert(fitSeals).values({
      fitId: fit.id,
      sha256,
      sealedBy: actor.id,
      sealedAt: now,
      singlePersonSignOff,
      model: snapshot,
    });
    await recordEvent(tx, {
      studyId: fit.studyId,
      actorId: actor.id,
      kind: "fit.sealed",
      targetType: "fit",
      targetId: fit.id,
      after: singlePersonSignOff ? { sha256, singlePersonSignOff } : { sha256 },
      at: now,
    });
    return sha256;
  });
}
