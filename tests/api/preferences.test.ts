/**
 * What the screens remember for a person (GET/PUT/DELETE
 * /api/me/preferences): stored per person, kept across sign-ins, checked
 * against contract/preferences.ts on the way in, and never shared.
 */
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { type TestApp, createTestApp, signInByEmail, signInDemo } from "./helpers";

let t: TestApp;

beforeAll(async () => {
  t = await createTestApp({ seed: true });
});

afterAll(async () => {
  await t?.close();
});

const key = "/api/me/preferences/region-table.columns";

describe("preferences", () => {
  it("starts empty, keeps a value per person and across sign-ins", async () => {
    const analyst = await signInDemo(t, "analyst@demo.covarion.test");
    expect((await analyst.get("/api/me/preferences").expect(200)).body).toEqual({
      preferences: {},
    });

    const put = await analyst
      .put(key)
      .send({ value: ["df", "statistic"] })
      .expect(200);
    expect(put.body).toEqual({ key: "region-table.columns", value: ["df", "statistic"] });

    // A new session of the same person (another browser) sees it.
    const again = await signInByEmail(t, "analyst@demo.covarion.test");
    expect((await again.get("/api/me/preferences").expect(200)).body.preferences).toEqual({
      "region-table.columns": ["df", "statistic"],
    });

    // Another person does not.
    const viewer = await signInDemo(t, "viewer@demo.covarion.test");
    expect((await viewer.get("/api/me/preferences").expect(200)).body.preferences).toEqual({});

    // A second write replaces the first; delete forgets it.
    await again.put(key).send({ value: [] }).expect(200);
    expect((await analyst.get("/api/me/preferences").expect(200)).body.preferences).toEqual({
      "region-table.columns": [],
    });
    await analyst.delete(key).expect(204);
    expect((await analyst.get("/api/me/preferences").expect(200)).body.preferences).toEqual({});
  });

  it("refuses unknown keys and values of the wrong shape, naming the field", async () => {
    const analyst = await signInDemo(t, "analyst@demo.covarion.test");
    const unknown = await analyst.put("/api/me/preferences/colour").send({ value: 1 }).expect(400);
    expect(unknown.body.error.code).toBe("validation_failed");
    expect(unknown.body.error.details[0].field).toBe("params.key");

    const wrong = await analyst.put(key).send({ value: "df" }).expect(400);
    expect(wrong.body.error.details[0].field).toBe("body.value");

    const tooLong = await analyst
      .put(key)
      .send({ value: ["x".repeat(65)] })
      .expect(400);
    expect(tooLong.body.error.details[0].field).toBe("body.value.0");

    const extra = await analyst.put(key).send({ value: [], other: 1 }).expect(400);
    expect(extra.body.error.code).toBe("validation_failed");

    // Nothing was stored by the refused writes.
    expect((await analyst.get("/api/me/preferences").expect(200)).body.preferences).toEqual({});
  });
});
