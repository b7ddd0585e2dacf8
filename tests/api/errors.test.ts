/**
 * The error envelope's mapping from thrown values to status and body, and
 * the error middleware's 500 (logged on the server, no stack to the client).
 */
import express from "express";
import request from "supertest";
import { describe, expect, it } from "vitest";
import { z } from "zod";
import { IntakeError, problem } from "../../server/intake/errors";
import { errorHandler, HttpError, toErrorResponse } from "../../server/http/errors";
import { StatsError } from "../../server/stats/errors";

describe("toErrorResponse", () => {
  it("maps HttpError, zod, StatsError and IntakeError", () => {
    expect(toErrorResponse(new HttpError(409, "conflict", "Taken."))).toEqual({
      status: 409,
      body: { error: { code: "conflict", message: "Taken." } },
    });
    const zod = z.object({ name: z.string() }).safeParse({ name: 3 });
    const mapped = toErrorResponse(zod.error);
    expect(mapped.status).toBe(400);
    expect(mapped.body.error.details).toEqual([
      { field: "body.name", message: expect.any(String) },
    ]);
    expect(
      toErrorResponse(new StatsError("welchTTest requires at least two values per group")),
    ).toEqual({
      status: 422,
      body: {
        error: {
          code: "stats_precondition",
          message: "welchTTest requires at least two values per group",
        },
      },
    });
    const intake = new IntakeError(422, [
      problem("brain.csv", "not_a_number", '"O.42" is not a number', {
        row: 17,
        column: "L_insula",
      }),
    ]);
    const im = toErrorResponse(intake);
    expect(im.status).toBe(422);
    expect(im.body.error).toMatchObject({
      code: "not_a_number",
      message: 'brain.csv row 17, column L_insula: "O.42" is not a number',
    });
    expect(im.body.error.details).toMatchObject({
      problemCount: 1,
      problems: [{ file: "brain.csv", row: 17, column: "L_insula" }],
    });
    expect(
      toErrorResponse(new IntakeError(413, [problem("big.csv", "too_large", "too many bytes")]))
        .status,
    ).toBe(413);
  });

  it("answers anything else 500 with a generic message, logs it, and sends no stack", async () => {
    const logged: unknown[] = [];
    const app = express();
    app.get("/boom", () => {
      throw new Error("secret internal detail");
    });
    app.use(errorHandler((error) => logged.push(error)));
    const res = await request(app).get("/boom").expect(500);
    expect(res.body).toEqual({
      error: {
        code: "internal_error",
        message: "Something went wrong on the server. It has been logged.",
      },
    });
    expect(res.text).not.toContain("secret internal detail");
    expect(logged).toHaveLength(1);
  });
});
