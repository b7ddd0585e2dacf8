/**
 * What a fit hands to a paper, through the real app: the region table CSV,
 * the recipe JSON, the methods paragraph; the exact re-run of the
 * downloaded recipe by the recipe command beside the original uploaded
 * files; approval and sealing with their role rules, and a sealed fit that
 * can no longer change.
 *
 * The two small files are invented here from a seeded generator: 14
 * participants in the brain table (one written "7" where the sheet says
 * "sub-07"), 15 in the participant sheet.
 */
import { createHash } from "node:crypto";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { fitRegions, fits, memberships } from "../../db/schema";
import { recipeSchema } from "../../contract/recipe";
import { readTable, tableRows } from "../../server/intake";
import { createRng, normalDraw } from "../../server/stats/rng";
import { REGION_DETAIL_KEYS } from "../../server/services/fits";
import { sealHash } from "../../server/services/sealing";
import { type Agent, type TestApp, createTestApp, signInDemo, userIdOf } from "./helpers";
import { runRecipeCommand } from "../support/recipe-command";

const projectRoot = join(import.meta.dirname, "..", "..");
const packageVersion = (
  JSON.parse(readFileSync(join(projectRoot, "package.json"), "utf8")) as { version: string }
).version;

let t: TestApp;
const agents: Record<"owner" | "analyst" | "reviewer" | "viewer", Agent> = {} as never;
let studyId: string;

const brainFileName = "harbour-lantern_brain-table.csv";
const sheetFileName = "harbour-lantern_participants.tsv";
const regions = ["L_insula", "R_insula", "L_dlpfc"];

/** Invented files from a seeded generator (values to three decimals). */
function smallFiles(): { brain: string; sheet: string } {
  const rng = createRng(20260101);
  const normal = () => normalDraw(rng);
  const brainLines = [["participant_id", ...regions].join(",")];
  const sheetLines = [["participant_id", "age", "accuracy", "group"].join("\t")];
  for (let i = 1; i <= 15; i++) {
    const id = `sub-${String(i).padStart(2, "0")}`;
    const age = 20 + Math.floor(rng.next() * 40);
    const accuracy = 0.6 + 0.35 * rng.next();
    sheetLines.push(
      [id, String(age), accuracy.toFixed(3), i % 2 === 0 ? "patient" : "control"].join("\t"),
    );
    if (i === 15) continue; // only in the sheet
    const values = regions.map((_, r) =>
      (0.2 + 0.8 * (accuracy - 0.78) * (r + 1) + 0.15 * normal()).toFixed(3),
    );
    brainLines.push([i === 7 ? "7" : id, ...values].join(","));
  }
  return { brain: `${brainLines.join("\n")}\n`, sheet: `${sheetLines.join("\n")}\n` };
}
const files = smallFiles();
const sha256 = (text: string) => createHash("sha256").update(text).digest("hex");

async function uploadAndConfirm(
  agent: Agent,
  kind: "brain" | "participants",
  content: string,
  fileName: string,
): Promise<void> {
  const preview = await agent
    .post(`/api/studies/${studyId}/datasets`)
    .field("kind", kind)
    .attach("file", Buffer.from(content), fileName)
    .expect(201);
  await agent
    .post(`/api/studies/${studyId}/datasets/${preview.body.id}/confirm`)
    .send({})
    .expect(201);
}

async function waitForDone(fitId: string): Promise<Record<string, unknown>> {
  const start = Date.now();
  for (;;) {
    const res = await agents.analyst.get(`/api/fits/${fitId}`).expect(200);
    if (res.body.status === "done") return res.body;
    if (res.body.status === "failed" || res.body.status === "cancelled")
      throw new Error(`fit ${fitId} ${res.body.status}: ${JSON.stringify(res.body.error)}`);
    if (Date.now() - start > 60_000) throw new Error(`fit ${fitId} stayed ${res.body.status}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

async function runModel(
  name: string,
  spec: Record<string, unknown>,
  regionSelection = "anatomical-or-prior",
): Promise<string> {
  const model = await agents.analyst
    .post(`/api/studies/${studyId}/models`)
    .send({ name, regionSelection, spec })
    .expect(201);
  const fit = await agents.analyst
    .post(`/api/studies/${studyId}/fits`)
    .send({ modelId: model.body.id })
    .expect(202);
  await waitForDone(fit.body.id);
  return fit.body.id as string;
}

const associationSpec = {
  kind: "association",
  predictor: "accuracy",
  covariates: ["age"],
  inference: "permutation",
  resamples: 2000,
  seed: 11,
  correction: "holm",
};
let fitId: string;

beforeAll(async () => {
  t = await createTestApp();
  for (const role of ["owner", "analyst", "reviewer", "viewer"] as const)
    agents[role] = await signInDemo(t, `${role}@demo.covarion.test`);
  const study = await agents.owner
    .post("/api/studies")
    .send({ name: "Harbour lantern publication" })
    .expect(201);
  studyId = study.body.id;
  for (const role of ["analyst", "reviewer", "viewer"] as const) {
    await t.db
      .insert(memberships)
      .values({ studyId, userId: await userIdOf(t.db, `${role}@demo.covarion.test`), role });
  }
  await uploadAndConfirm(agents.analyst, "brain", files.brain, brainFileName);
  await uploadAndConfirm(agents.analyst, "participants", files.sheet, sheetFileName);
  await agents.analyst
    .post(`/api/studies/${studyId}/roster/mappings`)
    .send({ mappings: [{ brainId: "7", sheetId: "sub-07" }] })
    .expect(201);
  await agents.analyst
    .post(`/api/studies/${studyId}/set-asides`)
    .send({
      participant: "sub-03",
      reason: "Mean framewise displacement above the preregistered limit",
    })
    .expect(201);
  await agents.analyst
    .post(`/api/studies/${studyId}/set-asides`)
    .send({ participant: "sub-05", region: "L_dlpfc", reason: "Signal dropout in this region" })
    .expect(201);
  fitId = await runModel("Accuracy with age, permutation", associationSpec);
}, 120_000);
afterAll(async () => {
  await t?.close();
});

describe("exports of a finished fit", () => {
  it("regions.csv: one row per region with every number in full precision, as an attachment", async () => {
    const fit = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    const res = await agents.viewer.get(`/api/fits/${fitId}/regions.csv`).expect(200);
    expect(res.headers["content-type"]).toMatch(/^text\/csv/);
    expect(res.headers["content-disposition"]).toBe(
      `attachment; filename="fit-${fitId.slice(0, 8)}-regions.csv"`,
    );
    const table = readTable(res.text, "regions.csv");
    expect(table.header).toEqual([
      "region",
      "n",
      "estimate",
      "se",
      "statistic",
      "df",
      "p",
      "p_adjusted",
      "ci_low",
      "ci_high",
      "r",
      "r_ci_low",
      "r_ci_high",
      "method",
      "inference",
      "correction",
    ]);
    const shown = fit.body.result.regions as Record<string, unknown>[];
    expect(tableRows(table).map((r) => r[0])).toEqual(regions);
    const keys = [
      "n",
      "estimate",
      "se",
      "statistic",
      "df",
      "p",
      "pAdjusted",
      "ciLow",
      "ciHigh",
      "r",
      "rCiLow",
      "rCiHigh",
    ];
    tableRows(table).forEach((row, i) => {
      for (const [j, k] of keys.entries())
        expect(Number(row[j + 1]), `${regions[i]} ${k}`).toBe(shown[i][k]);
      expect(row[13]).toBe(shown[i].method);
      expect(row[14]).toBe(
        "permutation (Freedman–Lane, 2000 random rearrangements plus the observed order, Monte Carlo)",
      );
      expect(row[15]).toBe("Holm");
    });
    // The set-aside from every region and the one from L_dlpfc: 14 matched − 1, and one fewer in L_dlpfc.
    expect(tableRows(table).map((r) => Number(r[1]))).toEqual([13, 13, 12]);
  });

  it("recipe.json: the stored recipe, accepted as it is by the recipe command's schema", async () => {
    const fit = await agents.analyst.get(`/api/fits/${fitId}`).expect(200);
    const res = await agents.reviewer.get(`/api/fits/${fitId}/recipe.json`).expect(200);
    expect(res.headers["content-type"]).toMatch(/^application\/json/);
    expect(res.headers["content-disposition"]).toBe(
      `attachment; filename="fit-${fitId.slice(0, 8)}-recipe.json"`,
    );
    const recipe = JSON.parse(res.text);
    expect(recipe).toEqual(fit.body.recipe);
    expect(Object.keys(recipe).slice(0, 3)).toEqual(["brainTable", "participantSheet", "idColumn"]);
    expect(recipeSchema.parse(recipe)).toMatchObject({
      brainTable: brainFileName,
      participantSheet: sheetFileName,
      mappings: [{ brainId: "7", sheetId: "sub-07" }],
      setAside: [
        {
          participant: "sub-03",
          reason: "Mean framewise displacement above the preregistered limit",
        },
        { participant: "sub-05", region: "L_dlpfc", reason: "Signal dropout in this region" },
      ],
      seed: 11,
      resamples: 2000,
      softwareVersion: packageVersion,
      inputs: {
        brainTable: { file: brainFileName, sha256: sha256(files.brain) },
        participantSheet: { file: sheetFileName, sha256: sha256(files.sheet) },
      },
    });
  });

  it("methods: the paragraph states the files, matching, set-asides, N range, methods, seed and version, with references", async () => {
    const res = await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200);
    const { text, references, cautions } = res.body as {
      text: string;
      references: { key: string; citation: string }[];
      cautions: string[];
    };
    expect(text).toContain(
      `“${brainFileName}” (version 1, SHA-256 ${sha256(files.brain).slice(0, 12)}…)`,
    );
    expect(text).toContain(
      `“${sheetFileName}” (version 1, SHA-256 ${sha256(files.sheet).slice(0, 12)}…)`,
    );
    expect(text).toContain(
      "Of 14 participants in the brain table and 15 in the participant sheet, 14 were matched (1 through an identifier mapping confirmed by a team member); 1 participant only in the participant sheet was not analysed.",
    );
    expect(text).toContain(
      "The team set aside 1 participant from every region and 1 participant from 1 region; every set-aside has a written reason",
    );
    expect(text).toContain("leaving N = 12–13 per region.");
    expect(text).toContain("Freedman–Lane procedure (Freedman & Lane 1983; Winkler et al. 2014)");
    expect(text).toContain(
      "2,000 random rearrangements were drawn with a seeded generator (seed 11)",
    );
    expect(text).toContain("Holm's step-down procedure (Holm 1979)");
    expect(text).toContain(`Analyses were run in Covarion version ${packageVersion}`);
    expect(text).not.toContain("sub-03"); // counts only, never participant ids
    expect(references.map((r) => r.key)).toEqual(
      expect.arrayContaining([
        "Freedman & Lane 1983",
        "Holm 1979",
        "Cook 1977",
        "Marek et al. 2022",
      ]),
    );
    expect(references.every((r) => r.citation.length > 20)).toBe(true);
    // Regions of 12–13 participants: the small-sample caution, then the imprecision of associations below 1,000.
    expect(cautions).toEqual([
      expect.stringContaining("fewer than 20 participants"),
      expect.stringContaining("fewer than 1,000 participants"),
    ]);
    for (const caution of cautions) expect(caution).toContain("(Marek et al. 2022)");
  });

  it("a circular model's paragraph carries the circularity caution", async () => {
    const circular = await runModel(
      "Chosen from these data",
      { kind: "one-sample", regions: ["L_insula"] },
      "same-data",
    );
    const res = await agents.viewer.get(`/api/fits/${circular}/methods`).expect(200);
    expect(res.body.cautions).toEqual([
      expect.stringContaining("(Vul et al. 2009; Kriegeskorte et al. 2009)"),
      expect.stringContaining("fewer than 20 participants"),
    ]);
    expect(res.body.text).toContain("With 1 region, no correction over regions applies.");
  });
});

describe("exact re-run of the recipe", () => {
  it("the recipe command on the downloaded recipe and the original files gives the API fit's regions number for number", async () => {
    const fit = await agents.analyst.get(`/api/fits/${fitId}`).expect(200);
    const recipeText = (await agents.analyst.get(`/api/fits/${fitId}/recipe.json`).expect(200))
      .text;
    const recipe = JSON.parse(recipeText) as { brainTable: string; participantSheet: string };
    const dir = mkdtempSync(join(tmpdir(), "covarion-rerun-"));
    try {
      writeFileSync(join(dir, "recipe.json"), recipeText);
      writeFileSync(join(dir, recipe.brainTable), files.brain);
      writeFileSync(join(dir, recipe.participantSheet), files.sheet);
      const run = await runRecipeCommand([join(dir, "recipe.json")]);
      expect(run.stderr).toBe("");
      expect(run.code).toBe(0);
      const out = JSON.parse(run.stdout) as {
        regions: Record<string, unknown>[];
        recipe: Record<string, unknown>;
      };
      // The fit view leaves each region's nested parts (null histogram, sensitivity, …) to the region detail: compare both.
      const withoutDetail = (r: Record<string, unknown>) =>
        Object.fromEntries(Object.entries(r).filter(([key]) => !REGION_DETAIL_KEYS.has(key)));
      expect(out.regions.map(withoutDetail)).toEqual(fit.body.result.regions);
      for (const r of out.regions) {
        const detail = await agents.analyst
          .get(`/api/fits/${fitId}/regions/${r.region as string}`)
          .expect(200);
        expect(detail.body.result).toEqual(r);
        expect(r.nullHistogram).toEqual(detail.body.nullHistogram);
      }
      expect(
        out.regions.every((r) => r.nullHistogram !== undefined && r.permutation !== undefined),
      ).toBe(true);
      // Not vacuous: estimates and the per-region N differ between regions; 2000 random rearrangements plus the observed order.
      expect(out.regions.map((r) => r.n)).toEqual([13, 13, 12]);
      expect(new Set(out.regions.map((r) => r.estimate)).size).toBe(3);
      expect(
        out.regions.every(
          (r) => (r.permutation as { rearrangements: number }).rearrangements === 2001,
        ),
      ).toBe(true);
      // The command's own recipe names the same inputs.
      expect(out.recipe.inputs).toEqual(fit.body.recipe.inputs);

      // Changed data bytes are refused, naming the file.
      writeFileSync(
        join(dir, recipe.participantSheet),
        files.sheet.replace("sub-01\t", "sub-01 \t"),
      );
      const changed = await runRecipeCommand([join(dir, "recipe.json")]);
      expect(changed.code).toBe(2);
      expect(changed.stderr).toContain(`${sheetFileName}: content differs from the recipe`);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }, 60_000);
});

describe("approval and sealing", () => {
  let sealedSha = "";

  it("the region table, methods and approval of an unfinished fit answer 409", async () => {
    const [done] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    const { id: _id, ...copy } = done;
    const [queued] = await t.db
      .insert(fits)
      .values({
        ...copy,
        status: "queued",
        progress: 0,
        result: null,
        startedAt: null,
        finishedAt: null,
      })
      .returning();
    for (const path of ["regions.csv", "methods"]) {
      const res = await agents.owner.get(`/api/fits/${queued.id}/${path}`).expect(409);
      expect(res.body.error.code).toBe("conflict");
    }
    // The recipe is fixed when the fit is created, so it can be downloaded at once.
    await agents.owner.get(`/api/fits/${queued.id}/recipe.json`).expect(200);
    const approve = await agents.reviewer.post(`/api/fits/${queued.id}/approve`).expect(409);
    expect(approve.body.error.message).toContain("Only a finished fit can be approved");
    await agents.owner.post(`/api/fits/${queued.id}/cancel`).expect(200);
  });

  it("a new fit shows neither approval nor seal", async () => {
    const fit = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    expect(fit.body).toMatchObject({ approval: null, seal: null });
  });

  it("Analysts and Viewers cannot approve; an unapproved fit cannot be sealed", async () => {
    await agents.analyst.post(`/api/fits/${fitId}/approve`).expect(403);
    await agents.viewer.post(`/api/fits/${fitId}/approve`).expect(403);
    const seal = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(409);
    expect(seal.body.error.message).toContain("has not been approved");
  });

  it("a Reviewer approves once; a second approval answers 409", async () => {
    const res = await agents.reviewer.post(`/api/fits/${fitId}/approve`).expect(200);
    expect(res.body.approval).toMatchObject({
      by: { name: expect.any(String) },
      at: expect.any(String),
    });
    expect(res.body.approval.by.id).toBe(await userIdOf(t.db, "reviewer@demo.covarion.test"));
    expect(res.body.seal).toBeNull();
    const again = await agents.owner.post(`/api/fits/${fitId}/approve`).expect(409);
    expect(again.body.error.message).toContain("already approved");
  });

  it("Analysts and Reviewers cannot seal; the Owner seals with the SHA-256 of the canonical recipe+result", async () => {
    await agents.analyst.post(`/api/fits/${fitId}/seal`).expect(403);
    await agents.reviewer.post(`/api/fits/${fitId}/seal`).expect(403);
    const res = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(200);
    expect(res.body.seal).toMatchObject({
      sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
      at: expect.any(String),
      intact: true,
    });
    expect(res.body.seal.by.id).toBe(await userIdOf(t.db, "owner@demo.covarion.test"));
    const [row] = await t.db.select().from(fits).where(eq(fits.id, fitId));
    expect(res.body.seal.sha256).toBe(sealHash(row.recipe, row.result));
    sealedSha = res.body.seal.sha256;
    const again = await agents.owner.post(`/api/fits/${fitId}/seal`).expect(409);
    expect(again.body.error.message).toContain("already sealed");
  });

  it("GET /api/fits/:fitId shows approval and seal to every member", async () => {
    const fit = await agents.viewer.get(`/api/fits/${fitId}`).expect(200);
    expect(fit.body.approval).not.toBeNull();
    expect(fit.body.seal).toMatchObject({ sha256: sealedSha, intact: true });
  });

  /** The database's own message of a refused statement (the driver wraps it as the error's cause). */
  async function refusal(statement: Promise<unknown>): Promise<string> {
    try {
      await statement;
    } catch (e) {
      const cause = (e as { cause?: { message?: string } }).cause;
      return cause?.message ?? (e as Error).message;
    }
    return "(not refused)";
  }

  it("a sealed fit stays unchanged: cancel answers 409 and the database refuses changes to its row and regions", async () => {
    const before = await agents.owner.get(`/api/fits/${fitId}`).expect(200);
    await agents.owner.post(`/api/fits/${fitId}/cancel`).expect(409);
    expect(
      await refusal(
        t.db
          .update(fits)
          .set({ result: { regions: [] } })
          .where(eq(fits.id, fitId)),
      ),
    ).toBe(`fit ${fitId} is sealed (UPDATE refused)`);
    expect(
      await refusal(
        t.db.update(fits).set({ recipe: sql`'{"seed":12}'::jsonb` }).where(eq(fits.id, fitId)),
      ),
    ).toBe(`fit ${fitId} is sealed (UPDATE refused)`);
    expect(await refusal(t.db.delete(fits).where(eq(fits.id, fitId)))).toBe(
      `fit ${fitId} is sealed (DELETE refused)`,
    );
    expect(
      await refusal(
        t.db.update(fitRegions).set({ participants: "[]" }).where(eq(fitRegions.fitId, fitId)),
      ),
    ).toBe(`fit ${fitId} is sealed (UPDATE of its regions refused)`);
    expect(
      await refusal(
        t.db.execute(sql`update fit_seals set sha256 = ${"0".repeat(64)} where fit_id = ${fitId}`),
      ),
    ).toBe("fit_seals is append-only (UPDATE refused)");
    expect(
      await refusal(t.db.execute(sql`delete from fit_approvals where fit_id = ${fitId}`)),
    ).toBe("fit_approvals is append-only (DELETE refused)");
    const after = await agents.owner.get(`/api/fits/${fitId}`).expect(200);
    expect(after.body.result).toEqual(before.body.result);
    expect(after.body.recipe).toEqual(before.body.recipe);
    expect(after.body.seal).toEqual(before.body.seal);
    expect(after.body.seal.intact).toBe(true);
  });

  it("approval and sealing are in the activity trail", async () => {
    const activity = await agents.owner
      .get(`/api/studies/${studyId}/activity?kind=fit`)
      .expect(200);
    const mine = (activity.body as { kind: string; targetId: string; after: unknown }[]).filter(
      (e) => e.targetId === fitId,
    );
    expect(mine.map((e) => e.kind)).toEqual(["fit.sealed", "fit.approved", "fit.run"]);
    expect(mine[0].after).toEqual({ sha256: sealedSha });
  });

  it("a sealed fit shows its model as it was at sealing: a later rename or deletion reaches only unsealed fits", async () => {
    const sealed = (await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body;
    const modelId = sealed.model.id as string;
    const sealedName = sealed.model.name as string;
    expect(sealed.model).toMatchObject({
      name: "Accuracy with age, permutation",
      deleted: false,
      circular: false,
    });
    const other = await agents.analyst
      .post(`/api/studies/${studyId}/fits`)
      .send({ modelId })
      .expect(202);
    await waitForDone(other.body.id);

    await agents.analyst
      .patch(`/api/studies/${studyId}/models/${modelId}`)
      .send({ name: "Renamed after sealing", regionSelection: "same-data" })
      .expect(200);
    const renamed = (await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body;
    expect(renamed.model).toMatchObject({
      id: modelId,
      name: sealedName,
      deleted: false,
      circular: false,
      caution: null,
    });
    expect(
      (await agents.viewer.get(`/api/fits/${other.body.id}`).expect(200)).body.model,
    ).toMatchObject({ name: "Renamed after sealing", deleted: false, circular: true });

    await agents.analyst.delete(`/api/studies/${studyId}/models/${modelId}`).expect(204);
    const deleted = (await agents.viewer.get(`/api/fits/${fitId}`).expect(200)).body;
    expect(deleted.model).toMatchObject({ id: modelId, name: sealedName, deleted: false });
    expect(deleted.seal).toMatchObject({ sha256: sealedSha, intact: true });
    expect(
      (await agents.viewer.get(`/api/fits/${other.body.id}`).expect(200)).body.model,
    ).toMatchObject({ name: "Renamed after sealing", deleted: true });
    // The study's list of fits shows the same.
    const list = (await agents.viewer.get(`/api/studies/${studyId}/fits`).expect(200)).body as {
      id: string;
      model: { name: string; deleted: boolean };
    }[];
    expect(list.find((f) => f.id === fitId)?.model).toMatchObject({
      name: sealedName,
      deleted: false,
    });
    expect(list.find((f) => f.id === other.body.id)?.model).toMatchObject({
      name: "Renamed after sealing",
      deleted: true,
    });
  });

  it("in a restricted study, Viewers get the region table and methods but not the recipe (it names participants)", async () => {
    await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: true }).expect(200);
    try {
      await agents.viewer.get(`/api/fits/${fitId}/regions.csv`).expect(200);
      await agents.viewer.get(`/api/fits/${fitId}/methods`).expect(200);
      const recipe = await agents.viewer.get(`/api/fits/${fitId}/recipe.json`).expect(403);
      expect(recipe.body.error.message).toContain("names participants");
      await agents.reviewer.get(`/api/fits/${fitId}/recipe.json`).expect(200);
    } finally {
      await agents.owner.patch(`/api/studies/${studyId}`).send({ restricted: false }).expect(200);
    }
  });
});
